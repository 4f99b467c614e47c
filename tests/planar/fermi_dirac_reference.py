#!/usr/bin/python3
# Reference values for tests/planar/carrier_statistics_test.cc: F_{1/2}(eta), F_{-1/2}(eta)
# (Blakemore normalisation, 1/Gamma(j+1)), multiplied by e^{-eta} for eta <= 0, by mpmath
# quadrature (30 digits) split at t = eta.
import mpmath as mp
mp.mp.dps=30
def F(j,eta):
    eta=mp.mpf(eta)
    f=lambda t: t**j/(1+mp.exp(t-eta))
    pts=[0]+([eta] if eta>0 else [])+[max(eta,0)+40, mp.inf]
    return mp.quad(f,pts)/mp.gamma(j+1)
for eta in ['-30','-5','0','3','19.9','20.1','50','1e4']:
    a=F(mp.mpf(1)/2,eta); b=F(-mp.mpf(1)/2,eta)
    e=mp.mpf(eta)
    if e<=0: a*=mp.exp(-e); b*=mp.exp(-e)
    print(eta, mp.nstr(a,20), mp.nstr(b,20))
