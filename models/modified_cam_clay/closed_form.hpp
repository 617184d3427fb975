#pragma once
// Reference solutions of Modified Cam-Clay for triaxial compression from an isotropic state
// (p'_0, q = 0, void ratio e_0) with preconsolidation pressure p'_c0 >= p'_0, and the isotropic
// e-ln p' lines, independent of the return mapping in modified_cam_clay.cpp (no code shared).
// Tests and benchmarks compare the integrated model with them; they are plain functions so an
// interpretation or report module may use them too.
//
// Strains are natural (logarithmic), as the driver integrates them: eps_v = ln(V0/V) =
// ln((1 + e_0)/(1 + e)), d eps_v = -de/(1 + e) with the current void ratio e, and
// eps_a = eps_q + eps_v/3 (natural strains are additive, so the triaxial split holds exactly).
// Volumetric laws (Wood 1990, "Soil Behaviour and Critical State Soil Mechanics", CUP, ch. 4 and 6):
// de = -kappa d ln p' - (lambda - kappa) d ln p'_c, so along any path
//   e = e_0 - kappa ln(p'/p'_0) - (lambda - kappa) ln(p'_c/p'_c0)            (exact, no quadrature),
// with K = (1 + e) p'/kappa and, from Poisson's ratio, G = 3 (1 - 2 nu) K / (2 (1 + nu)).
//
// Sources:
// - Undrained (constant volume) effective stress path: Wood (1990), "Soil Behaviour and Critical
//   State Soil Mechanics", ch. 7 (undrained stress paths of Cam clay); Potts & Zdravkovic (1999),
//   "Finite Element Analysis in Geotechnical Engineering: Theory", ch. 7. With Lambda =
//   (lambda - kappa)/lambda and R = p'_c0/p'_0, constant volume gives
//   kappa ln(p'/p'_0) + (lambda - kappa) ln(p'_c/p'_c0) = 0, and with the yield surface
//   p'_c = p' (1 + eta^2/M^2):  p'/p'_0 = [R / (1 + eta^2/M^2)]^Lambda;  at critical state
//   (eta = M) p'_cs = p'_0 (R/2)^Lambda, q_cs = M p'_cs, c_u = q_cs/2.
// - Drained compression at constant s3': q = 3 (p' - p'_0) meets q = M p' at p' = 3 p'_0/(3 - M);
//   the critical state line follows from the normal compression line e = N - lambda ln p' as
//   e = Gamma - lambda ln p' with Gamma = N - (lambda - kappa) ln 2 (Wood 1990, ch. 6).
// - Axial strain along either path: the flow rule (associated, d eps_q^p / d eps_v^p =
//   2 q / (M^2 (2 p' - p'_c))), elastic shear d eps_q^e = dq / (3 G(p', e)), and the volumetric laws
//   above, d eps_v^e = kappa dp'/((1 + e) p'), d eps_v^p = (lambda - kappa) dp'_c/((1 + e) p'_c);
//   undrained, e = e_0 throughout. Elastic part of the drained path in closed form: with
//   G = g (1 + e) p'/kappa and dq = 3 dp', d eps_q^e = dp'/G = d eps_v^e / g, so
//   eps_q^e = eps_v^e / g = ln((1 + e_0)/(1 + e))/g. Yielding parts by Gauss-Legendre quadrature
//   in a path parameter s with
//   p'(s) = p'_cs + (p'_y - p'_cs) exp(-s^2) (smooth at the yield point and at critical state).
//   Semi-analytical: exact up to quadrature error (below 1e-10 relative with the defaults).

#include <algorithm>
#include <cmath>
#include <vector>

namespace triaxcal::mcc_reference {

/// Material constants as the model uses them (compression positive, kPa).
struct Material {
  double lambda = 0.0;
  double kappa = 0.0;
  double m = 0.0;               ///< M on the path (compression value)
  double e0 = 0.0;              ///< void ratio at the start of the path (p'_0)
  double poissons_ratio = 0.3;  ///< used when shear_modulus == 0
  double shear_modulus = 0.0;   ///< constant G (kPa), 0 = from Poisson's ratio

  double big_lambda() const { return (lambda - kappa) / lambda; }
  /// g = G / K from Poisson's ratio, 3 (1 - 2 nu) / (2 (1 + nu)).
  double shear_to_bulk() const { return 1.5 * (1.0 - 2.0 * poissons_ratio) / (1.0 + poissons_ratio); }
  /// Tangent bulk modulus (1 + e) p'/kappa at p' and void ratio e (kPa).
  double bulk_at(double p, double e) const { return (1.0 + e) * p / kappa; }
  /// Tangent shear modulus at p' and void ratio e (kPa).
  double shear_at(double p, double e) const {
    return shear_modulus > 0.0 ? shear_modulus : shear_to_bulk() * bulk_at(p, e);
  }
  /// Void ratio at (p', p'_c) from the start (p'_0, p'_c0, e_0): the e-ln p' laws, exact.
  double void_ratio_at(double p0, double pc0, double p, double pc) const {
    return e0 - kappa * std::log(p / p0) - (lambda - kappa) * std::log(pc / pc0);
  }
};

/// Isotropic normal compression line through (p'_ref, e_ref): e = e_ref - lambda ln(p'/p'_ref).
inline double normal_compression_void_ratio(const Material& mat, double p_ref, double e_ref, double p) {
  return e_ref - mat.lambda * std::log(p / p_ref);
}

/// Unloading-reloading line through (p'_ref, e_ref): e = e_ref - kappa ln(p'/p'_ref).
inline double swelling_void_ratio(const Material& mat, double p_ref, double e_ref, double p) {
  return e_ref - mat.kappa * std::log(p / p_ref);
}

/// Natural volumetric strain from void ratio e_from to e_to: ln((1 + e_from)/(1 + e_to)).
inline double natural_volumetric_strain(double e_from, double e_to) { return std::log((1.0 + e_from) / (1.0 + e_to)); }

struct PathPoint {
  double axial_strain = 0.0;
  double p = 0.0;
  double q = 0.0;
  double volumetric_strain = 0.0;
};

/// Undrained: p'_c on the constant-volume path at p' (Wood 1990, from kappa ln p' + (lambda - kappa) ln p'_c = const).
inline double undrained_preconsolidation(const Material& mat, double p0, double pc0, double p) {
  return pc0 * std::pow(p0 / p, mat.kappa / (mat.lambda - mat.kappa));
}

/// Undrained: q on the yield part of the constant-volume path at p' (M > 0 gives q >= 0).
inline double undrained_q_at_p(const Material& mat, double p0, double pc0, double p) {
  const double pc = undrained_preconsolidation(mat, p0, pc0, p);
  return mat.m * std::sqrt(std::max(0.0, p * (pc - p)));
}

/// Undrained: p' at critical state, p'_0 (R/2)^Lambda with R = p'_c0 / p'_0.
inline double undrained_critical_p(const Material& mat, double p0, double pc0) {
  return p0 * std::pow(pc0 / (2.0 * p0), mat.big_lambda());
}

/// Drained at constant s3': p' at critical state, 3 p'_0 / (3 - M).
inline double drained_critical_p(const Material& mat, double p0) { return 3.0 * p0 / (3.0 - mat.m); }

namespace detail {

// End of the path parameter: exp(-4.5^2) = 1.6e-9, so the last point is critical state to about
// 1e-9 relative while 2 p' - p'_c stays clear of round-off in the flow rule.
inline constexpr double kPathEnd = 4.5;

// 5-point Gauss-Legendre on [-1, 1].
inline constexpr double kNodes[5] = {-0.9061798459386640, -0.5384693101056831, 0.0, 0.5384693101056831,
                                     0.9061798459386640};
inline constexpr double kWeights[5] = {0.2369268850561891, 0.4786286704993665, 0.5688888888888889,
                                       0.4786286704993665, 0.2369268850561891};

// Integrates d(eps_a)/dp' and d(eps_v)/dp' along p'(s) from s = 0 to s_max; appends points.
template <class Rates, class Stress>
void integrate_path(double p_y, double p_cs, double s_max, int panels, Rates rates, Stress q_of_p, PathPoint start,
                    std::vector<PathPoint>& out) {
  const double h = s_max / panels;
  PathPoint cur = start;
  for (int k = 0; k < panels; ++k) {
    double d_axial = 0.0;
    double d_vol = 0.0;
    for (int g = 0; g < 5; ++g) {
      const double s = h * (k + 0.5 + 0.5 * kNodes[g]);
      const double e = std::exp(-s * s);
      const double p = p_cs + (p_y - p_cs) * e;
      const double dp_ds = -2.0 * s * (p_y - p_cs) * e;
      double da = 0.0;
      double dv = 0.0;
      rates(p, da, dv);
      d_axial += 0.5 * h * kWeights[g] * da * dp_ds;
      d_vol += 0.5 * h * kWeights[g] * dv * dp_ds;
    }
    const double s1 = h * (k + 1);
    cur.p = p_cs + (p_y - p_cs) * std::exp(-s1 * s1);
    cur.q = q_of_p(cur.p);
    cur.axial_strain += d_axial;
    cur.volumetric_strain += d_vol;
    out.push_back(cur);
  }
}

}  // namespace detail

/// Undrained compression from (p'_0, 0) with p'_c0 >= p'_0: table of points from the start, through
/// the yield point (p'_0, M sqrt(p'_0 (p'_c0 - p'_0))), to critical state.
inline std::vector<PathPoint> undrained_path(const Material& mat, double p0, double pc0, int panels = 4000) {
  std::vector<PathPoint> path;
  path.reserve(panels + 2);
  path.push_back({0.0, p0, 0.0, 0.0});
  const double q_y = mat.m * std::sqrt(p0 * (pc0 - p0));
  // Elastic: p' (and e) constant at constant volume, so G is constant.
  PathPoint yield{q_y / (3.0 * mat.shear_at(p0, mat.e0)), p0, q_y, 0.0};
  if (q_y > 0.0) path.push_back(yield);
  const double p_cs = undrained_critical_p(mat, p0, pc0);
  const double ks = mat.kappa / (1.0 + mat.e0);  // e = e0 throughout
  const double ratio = mat.kappa / (mat.lambda - mat.kappa);
  const double m2 = mat.m * mat.m;
  auto rates = [&](double p, double& da, double& dv) {
    const double pc = undrained_preconsolidation(mat, p0, pc0, p);
    const double q = undrained_q_at_p(mat, p0, pc0, p);
    const double dq = m2 * (pc * (1.0 - ratio) - 2.0 * p) / (2.0 * q);
    const double dvp = -ks / p;  // d eps_v^p = -d eps_v^e
    da = dq / (3.0 * mat.shear_at(p, mat.e0)) + dvp * 2.0 * q / (m2 * (2.0 * p - pc));
    dv = 0.0;
  };
  auto q_of_p = [&](double p) { return undrained_q_at_p(mat, p0, pc0, p); };
  // OCR = 2 yields at critical state: nothing left to integrate.
  if (std::abs(p0 - p_cs) > 1e-12 * p0) detail::integrate_path(p0, p_cs, detail::kPathEnd, panels, rates, q_of_p, yield, path);
  return path;
}

/// Drained compression at constant s3' from (p'_0, 0) with p'_c0 >= p'_0 (q = 3 (p' - p'_0)).
inline std::vector<PathPoint> drained_path(const Material& mat, double p0, double pc0, int panels = 4000) {
  std::vector<PathPoint> path;
  path.reserve(panels + 2);
  path.push_back({0.0, p0, 0.0, 0.0});
  const double m2 = mat.m * mat.m;
  // Yield: 9 (p - p0)^2 + M^2 p (p - p_c0) = 0, the root with p >= p0.
  const double a2 = 9.0 + m2;
  const double a1 = -(18.0 * p0 + m2 * pc0);
  const double a0 = 9.0 * p0 * p0;
  const double p_y = (-a1 + std::sqrt(std::max(0.0, a1 * a1 - 4.0 * a2 * a0))) / (2.0 * a2);
  // Elastic part, closed form (header): e on the unloading-reloading line, eps_q = eps_v / g.
  auto elastic_point = [&](double p) {
    const double ev = natural_volumetric_strain(mat.e0, swelling_void_ratio(mat, p0, mat.e0, p));
    const double eq = mat.shear_modulus > 0.0 ? (p - p0) / mat.shear_modulus : ev / mat.shear_to_bulk();
    return PathPoint{eq + ev / 3.0, p, 3.0 * (p - p0), ev};
  };
  const PathPoint yield = elastic_point(p_y);
  if (p_y > p0) {
    constexpr int kElastic = 200;  // table points on the elastic part (curved when G depends on p')
    for (int i = 1; i <= kElastic; ++i) path.push_back(elastic_point(p0 + (p_y - p0) * i / kElastic));
  }
  const double p_cs = drained_critical_p(mat, p0);
  const double plastic = mat.lambda - mat.kappa;
  auto rates = [&](double p, double& da, double& dv) {
    const double q = 3.0 * (p - p0);
    const double pc = p + q * q / (m2 * p);
    const double dpc = 1.0 + (6.0 * q * p - q * q) / (m2 * p * p);
    const double e = mat.void_ratio_at(p0, pc0, p, pc);
    const double dvp = plastic * dpc / ((1.0 + e) * pc);
    const double dve = mat.kappa / ((1.0 + e) * p);
    const double dqe = 1.0 / mat.shear_at(p, e);  // dq/(3G) with dq = 3 dp
    const double dqp = dvp * 2.0 * q / (m2 * (2.0 * p - pc));
    dv = dvp + dve;
    da = dqe + dqp + dv / 3.0;
  };
  auto q_of_p = [&](double p) { return 3.0 * (p - p0); };
  if (std::abs(p_y - p_cs) > 1e-12 * p0) detail::integrate_path(p_y, p_cs, detail::kPathEnd, panels, rates, q_of_p, yield, path);
  return path;
}

/// The point of a reference path at an axial strain (linear interpolation; beyond the table, its
/// last point, which is critical state to round-off).
inline PathPoint at_axial_strain(const std::vector<PathPoint>& path, double axial_strain) {
  if (axial_strain <= path.front().axial_strain) return path.front();
  if (axial_strain >= path.back().axial_strain) return path.back();
  const auto it = std::upper_bound(path.begin(), path.end(), axial_strain,
                                   [](double v, const PathPoint& pt) { return v < pt.axial_strain; });
  const PathPoint& b = *it;
  const PathPoint& a = *(it - 1);
  const double t = (axial_strain - a.axial_strain) / (b.axial_strain - a.axial_strain);
  return {axial_strain, a.p + t * (b.p - a.p), a.q + t * (b.q - a.q),
          a.volumetric_strain + t * (b.volumetric_strain - a.volumetric_strain)};
}

}  // namespace triaxcal::mcc_reference
