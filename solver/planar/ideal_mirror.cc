// Ideal mirrors: frequency-independent reflection (conventions in planar.h).
//   perfect electric conductor (PEC):  r_TE = -1, r_TM = +1   (same as the perfect-conductor
//                                      half-space);
//   perfect magnetic conductor (PMC):  r_TE = +1, r_TM = -1   (the dual mirror, standard).
// At every xi including xi = 0. Sphere-sphere uses them through the mirror identity
// det(1 - M_ss(L)) = det(1 - M_sp,PEC(L/2)) det(1 - M_sp,PMC(L/2)) for equal spheres (checked
// against sphere_sphere.cc in tests/sphere_sphere).
#include <memory>
#include <string>

#include "solver/planar/planar.h"

namespace roundtrip {
namespace {

class MirrorAt final : public PlanarAtFrequency {
 public:
  explicit MirrorAt(double sign) : sign_(sign) {}
  Reflection reflect(double) const override { return {-sign_, sign_}; }

 private:
  double sign_;
};

class IdealMirror final : public PlanarSurface {
 public:
  explicit IdealMirror(MirrorKind kind) : kind_(kind) {}
  std::unique_ptr<PlanarAtFrequency> at(double, const Material&) const override {
    return std::make_unique<MirrorAt>(kind_ == MirrorKind::kElectric ? 1.0 : -1.0);
  }
  std::string describe() const override {
    return kind_ == MirrorKind::kElectric ? "ideal electric mirror (r_TE = -1, r_TM = +1)"
                                          : "ideal magnetic mirror (r_TE = +1, r_TM = -1)";
  }
  bool is_perfect_conductor() const override { return kind_ == MirrorKind::kElectric; }

 private:
  MirrorKind kind_;
};

}  // namespace

PlanarPtr make_ideal_mirror(MirrorKind kind) { return std::make_shared<IdealMirror>(kind); }

}  // namespace roundtrip
