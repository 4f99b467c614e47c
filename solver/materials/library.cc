// Built-in materials (library.h). Parameters, forms and their provenance are stated per entry.
#include "solver/materials/library.h"

#include <functional>
#include <map>
#include <mutex>
#include <utility>

#include "solver/constants.h"
#include "solver/materials/models.h"

namespace roundtrip {
namespace {

constexpr double kEv = kRadPerSecondPerEv;  // rad/s per eV

MaterialPtr drude_lorentz(const char* name, DrudeLorentzParams p, const char* source) {
  return std::make_shared<DrudeLorentz>(name, std::move(p), source);
}

struct Entry {
  const char* name;
  std::function<MaterialPtr()> make;
};

const std::vector<Entry>& entries() {
  static const std::vector<Entry> list = {
      {"vacuum", [] { return make_vacuum(); }},
      {"perfect-conductor", [] { return make_perfect_conductor(); }},
      // eps = 1 + wp^2/(xi(xi+gamma)), wp = 9.0 eV, gamma = 35 meV: common practice in the Casimir
      // literature (Svetovoy et al., PRB 77, 035439 (2008) call it "typical").
      {"gold-drude",
       [] {
         DrudeLorentzParams p;
         p.plasma_frequency = 9.0 * kEv;
         p.damping = 0.035 * kEv;
         return drude_lorentz("gold-drude", p,
                              "common practice (wp = 9.0 eV, gamma = 35 meV; see Svetovoy et al., "
                              "PRB 77, 035439 (2008))");
       }},
      // Plasma model eps = 1 + wp^2/xi^2 with the same wp.
      {"gold-plasma",
       [] {
         DrudeLorentzParams p;
         p.plasma_frequency = 9.0 * kEv;
         return drude_lorentz("gold-plasma", p,
                              "common practice (plasma model, wp = 9.0 eV; see Svetovoy et al., "
                              "PRB 77, 035439 (2008))");
       }},
      // Intrinsic silicon: eps = eps_inf + (eps_0 - eps_inf) w0^2/(w0^2 + xi^2),
      // eps_0 = 11.87, eps_inf = 1.035, w0 = 6.6e15 rad/s.
      {"silicon",
       [] {
         DrudeLorentzParams p;
         p.eps_inf = 1.035;
         p.oscillators = {{11.87 - 1.035, 6.6e15, 0.0}};
         return drude_lorentz("silicon", p,
                              "single-oscillator fit used by Lambrecht and co-workers; values from "
                              "memory, not verified");
       }},
      // Amorphous silica, Ninham-Parsegian form eps = 1 + sum C/(1 + xi^2/w^2) (Bergstrom, Adv.
      // Colloid Interface Sci. 70, 125 (1997)): C_IR = 1.71, w_IR = 1.88e14 rad/s, C_UV = 1.098,
      // w_UV = 2.034e16 rad/s.
      {"silica",
       [] {
         DrudeLorentzParams p;
         p.oscillators = {{1.71, 1.88e14, 0.0}, {1.098, 2.034e16, 0.0}};
         return drude_lorentz("silica", p,
                              "Ninham-Parsegian form of Bergstrom, Adv. Colloid Interface Sci. 70, "
                              "125 (1997); values from memory, not verified");
       }},
      // Polystyrene, two-oscillator Ninham-Parsegian form (Hough & White, Adv. Colloid Interface
      // Sci. 14, 3 (1980)): C_UV = 1.447 at 1.354e16 rad/s; C_IR = 0.103 at 5.54e14 rad/s so that
      // eps(0) = 2.55.
      {"polystyrene",
       [] {
         DrudeLorentzParams p;
         p.oscillators = {{0.103, 5.54e14, 0.0}, {1.447, 1.354e16, 0.0}};
         return drude_lorentz(
             "polystyrene", p,
             "two-oscillator form after Hough & White, Adv. Colloid Interface Sci. "
             "14, 3 (1980); values from memory, not verified");
       }},
      // Water at room temperature, reduced Parsegian-type model: Debye d = 74.8 at
      // 1/tau = 1.05e11 rad/s, one IR oscillator C = 1.92 at 1.3e14 rad/s, one UV oscillator
      // C = 0.777 (n^2 - 1 with n = 1.333) at 1.9e16 rad/s; eps(0) = 78.5 (handbook value).
      {"water",
       [] {
         DrudeLorentzParams p;
         p.oscillators = {{1.92, 1.3e14, 0.0}, {0.777, 1.9e16, 0.0}};
         p.relaxations = {{74.8, 1.05e11}};
         return drude_lorentz("water", p,
                              "reduced form of Parsegian, Van der Waals Forces, CUP (2006): one "
                              "Debye, one IR, one UV term; values from memory, not verified");
       }},
  };
  return list;
}

}  // namespace

std::vector<std::string> builtin_material_names() {
  std::vector<std::string> names;
  for (const auto& e : entries()) names.emplace_back(e.name);
  return names;
}

MaterialPtr builtin_material(const std::string& name) {
  static std::mutex mutex;
  static std::map<std::string, MaterialPtr> made;
  std::lock_guard<std::mutex> lock(mutex);
  if (auto it = made.find(name); it != made.end()) return it->second;
  for (const auto& e : entries()) {
    if (name == e.name) return made[name] = e.make();
  }
  return nullptr;
}

}  // namespace roundtrip
