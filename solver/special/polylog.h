#pragma once
// Real polylogarithms Li_2(x) (x <= 1) and Li_3(x) (-1 <= x <= 1), Li_s(x) = sum_{n>=1} x^n / n^s.
// Used for the L-integrated Lifshitz integrand (PFA) and the nonretarded Hamaker-type limit.
// Methods: Bernoulli series in -ln(1-x) with the reflection/inversion formulas for Li_2, and the
// power series / expansion in ln x around x = 1 for Li_3 (Lewin, Polylogarithms and Associated
// Functions, North Holland 1981, ch. 1 and 6). Relative accuracy ~1e-15.
namespace roundtrip::special {

/// Dilogarithm for real x <= 1 (Li_2(1) = pi^2/6). Throws std::domain_error for x > 1 or NaN.
double dilog(double x);

/// Trilogarithm for real -1 <= x <= 1 (Li_3(1) = zeta(3)). Throws std::domain_error outside.
double trilog(double x);

}  // namespace roundtrip::special
