#pragma once
// The quantity every geometry returns at one imaginary frequency and how many L-derivatives a
// caller wants. Units: value as the geometry states (1 for compact bodies, 1/m^2 per area, 1/m
// per length); d1 carries an extra 1/m, d2 an extra 1/m^2.

namespace roundtrip {

/// A frequency-resolved quantity and its first two derivatives with respect to the gap L.
struct Spectral {
  double value = 0.0;
  double d1 = 0.0;
  double d2 = 0.0;
  Spectral& operator+=(const Spectral& o) {
    value += o.value;
    d1 += o.d1;
    d2 += o.d2;
    return *this;
  }
  Spectral operator*(double w) const { return {value * w, d1 * w, d2 * w}; }
};

/// How many L-derivatives a caller needs: 0 energy only, 1 with force, 2 with gradient.
enum class DerivativeOrder : int { kEnergy = 0, kForce = 1, kGradient = 2 };

}  // namespace roundtrip
