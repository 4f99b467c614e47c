#pragma once
// Model dielectric functions at imaginary frequency xi (rad/s).
//
// DrudeLorentz covers the local models used in the Casimir literature:
//   eps(i xi) = eps_inf + omega_p^2 / (xi (xi + gamma)) + sum_j C_j w_j^2 / (w_j^2 + xi^2 + g_j xi)
// gamma = 0 is the plasma model, gamma > 0 the Drude model, omega_p = 0 a Lorentz/Ninham-Parsegian
// oscillator dielectric (Bergstrom, Adv. Colloid Interface Sci. 70, 125 (1997)), no terms a
// constant. With omega_p > 0 and oscillators it is the generalized plasma-like (gamma = 0) or
// Drude-Lorentz (gamma > 0) model (Klimchitskaya, Mohideen, Mostepanenko, RMP 81, 1827 (2009)).
// All frequencies in rad/s; C_j dimensionless. Optional Debye relaxation terms
//   + sum_r d_r / (1 + xi / w_r)
// describe orientational polarisation (water; Parsegian, Van der Waals Forces, CUP (2006), ch. L2).
#include <string>
#include <vector>

#include "solver/materials/material.h"

namespace roundtrip {

struct Oscillator {
  double strength = 0.0;   ///< C_j (dimensionless)
  double frequency = 0.0;  ///< w_j (rad/s), > 0
  double damping = 0.0;    ///< g_j (rad/s), >= 0
};

/// Debye relaxation d / (1 + xi / rate) on the imaginary axis.
struct Relaxation {
  double strength = 0.0;  ///< d (dimensionless), >= 0
  double rate = 0.0;      ///< 1/tau (rad/s), > 0
};

struct DrudeLorentzParams {
  double eps_inf = 1.0;
  double plasma_frequency = 0.0;  ///< omega_p (rad/s)
  double damping = 0.0;           ///< gamma (rad/s); 0 = plasma model
  std::vector<Oscillator> oscillators;
  std::vector<Relaxation> relaxations;
};

class DrudeLorentz final : public Material {
 public:
  DrudeLorentz(std::string name, DrudeLorentzParams p, std::string source = "user defined");
  double epsilon(double xi) const override;
  StaticLimit static_limit() const override;
  std::string name() const override { return name_; }
  std::string description() const override;
  std::string source() const override { return source_; }
  const DrudeLorentzParams& params() const { return p_; }

 private:
  std::string name_, source_;
  DrudeLorentzParams p_;
};

class PerfectConductor final : public Material {
 public:
  double epsilon(double) const override;
  StaticLimit static_limit() const override { return {StaticClass::kPerfectConductor, 0.0, 0.0}; }
  std::string name() const override { return "perfect-conductor"; }
  std::string description() const override { return "perfect conductor (eps = inf)"; }
  std::string source() const override { return "ideal limit (Casimir 1948)"; }
};

/// Convenience constructors (frequencies in rad/s).
MaterialPtr make_perfect_conductor();
MaterialPtr make_vacuum();
MaterialPtr make_constant(std::string name, double eps);
MaterialPtr make_plasma(std::string name, double omega_p);
MaterialPtr make_drude(std::string name, double omega_p, double gamma);

}  // namespace roundtrip
