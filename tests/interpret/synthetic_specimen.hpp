#pragma once
// Specimens with curves built in the tests (invented values, never a reference outside these tests):
// one consolidated shear stage, the Mohr-Coulomb drained compression curve in closed form, and lab
// noise.

#include <cmath>
#include <cstdint>
#include <random>
#include <string>
#include <vector>

#include "../support/lab_noise.hpp"
#include "triaxcal/conventions.hpp"
#include "triaxcal/series.hpp"

namespace triaxcal::test {

/// A consolidated specimen with one shear stage (stage index 2) and the given curves; effective
/// radial stress s3 - du, axial s_r' + q, constant cell pressure s3 + 300 (back pressure 300).
/// Strains are engineering strains from the stage start (series.hpp). `s3_noise` (may be empty)
/// is added to the effective radial stress of each point.
inline Specimen make_specimen(const std::string& id, ShearType test, double s3, const std::vector<double>& ea,
                              const std::vector<double>& q, const std::vector<double>& ev, const std::vector<double>& du,
                              const std::vector<double>& e = {}, const std::vector<double>& s3_noise = {}) {
  Specimen s;
  s.id = id;
  s.back_pressure = 300.0;
  SpecimenStage sat;
  sat.type = SpecimenStageType::saturation;
  SpecimenStage con;
  con.type = SpecimenStageType::consolidation;
  con.axial_stress = con.radial_stress = s3;
  SpecimenStage sh;
  sh.type = SpecimenStageType::shear;
  sh.shear = test;
  s.stages = {sat, con, sh};
  ReducedCurves& c = s.curves;
  for (std::size_t i = 0; i < ea.size(); ++i) {
    const double u = du.empty() ? 0.0 : du[i];
    const double sr = s3 - u + (s3_noise.empty() ? 0.0 : s3_noise[i]);
    c.stage.push_back(2);
    c.line.push_back(static_cast<int>(i) + 2);
    c.axial_strain.push_back(ea[i]);
    c.volumetric_strain.push_back(ev.empty() ? 0.0 : ev[i]);
    c.deviator_stress.push_back(q[i]);
    c.excess_pore_pressure.push_back(u);
    c.radial_stress.push_back(test == ShearType::uu ? kNotGiven : sr);
    c.axial_stress.push_back(test == ShearType::uu ? kNotGiven : sr + q[i]);
    c.mean_stress.push_back(test == ShearType::uu ? kNotGiven : sr + q[i] / 3.0);
    c.cell_pressure.push_back(s3 + 300.0);
    c.void_ratio.push_back(e.empty() ? kNotGiven : e[i]);
  }
  s.data_zero_stage = 2;
  return s;
}

/// Curves of a drained test in natural strains (axial x, volumetric y) and q, to be read as a lab does.
struct DrainedCurve {
  std::vector<double> x, y, q;
};

/// The drained triaxial compression curve of a linear elastic, perfectly plastic Mohr-Coulomb soil at
/// constant radial stress s3' (hand calculation): elastic, dq = E d eps_a and d eps_v = (1 - 2 nu)
/// d eps_a up to q_f = (K_p - 1) s3' + 2 c' sqrt(K_p), K_p = (1 + sin phi')/(1 - sin phi'); then q = q_f,
/// no elastic increments, and the plastic potential on the triaxial edge gives
/// d eps_v / d eps_a = 1 - K_psi = -2 sin psi / (1 - sin psi). Strain increments are natural (of the
/// current specimen), as a small-strain model integrated in natural strains gives them.
inline DrainedCurve mohr_coulomb_drained(double s3, double young, double nu, double phi, double c, double psi,
                                         double axial_end, double spacing) {
  const double sphi = std::sin(degrees_to_radians(phi)), spsi = std::sin(degrees_to_radians(psi));
  const double kp = (1.0 + sphi) / (1.0 - sphi);
  const double qf = (kp - 1.0) * s3 + 2.0 * c * std::sqrt(kp);
  const double ey = qf / young;
  const double rate = -2.0 * spsi / (1.0 - spsi);
  DrainedCurve d;
  for (int i = 0; i * spacing <= axial_end * (1.0 + 1e-12); ++i) {
    const double x = i * spacing;
    d.x.push_back(x);
    d.q.push_back(x <= ey ? young * x : qf);
    d.y.push_back(x <= ey ? (1.0 - 2.0 * nu) * x : (1.0 - 2.0 * nu) * ey + rate * (x - ey));
  }
  return d;
}

/// A CD specimen from natural-strain curves: engineering strains from the stage start as the lab
/// reports them (e = 1 - exp(-eps)), with lab noise on q, s3', e_a and e_v when `noise` is given.
inline Specimen drained_specimen(const std::string& id, double s3, const DrainedCurve& d, Noise* noise) {
  std::vector<double> ea, ev, q, s3n;
  for (std::size_t i = 0; i < d.x.size(); ++i) {
    const bool start = i == 0;  // the stage start is the strain origin: no noise on its strains
    ea.push_back(engineering_strain(d.x[i]) + (noise && !start ? kStrainNoise * noise->normal() : 0.0));
    ev.push_back(engineering_strain(d.y[i]) + (noise && !start ? kStrainNoise * noise->normal() : 0.0));
    q.push_back(d.q[i] + (noise ? kStressNoise * noise->normal() : 0.0));
    s3n.push_back(noise ? kStressNoise * noise->normal() : 0.0);
  }
  return make_specimen(id, ShearType::cd, s3, ea, q, ev, {}, {}, s3n);
}

// Invented sand specimens whose expected sand-state values are hand calculations (issue 17; used by
// tests/interpret/sand_state_test.cpp and tests/report/interpretation_report_test.cpp): the steady end
// states lie on the power-law critical-state line e_c = 0.90 - 0.03 (p'/p_at)^0.7, M = 1.2.
namespace sand_hand {

constexpr double kPat = 101.325;  // kPa
constexpr double kEg = 0.90, kLc = 0.03, kXi = 0.7, kM = 1.2;
inline double csl(double p) { return kEg - kLc * std::pow(p / kPat, kXi); }

/// A CD compression specimen at s3' (du = 0) with its start void ratio e0: q rises to the peak of
/// stress ratio R = (1 + sin phi_pk)/(1 - sin phi_pk) at 4 % axial strain, falls to the critical state
/// q = M p' at 12 % (p' = s3'/(1 - M/3)) and stays there to 20 %; e goes from e0 to e_c(p'_end) by 12 %
/// and stays; e_v rises 1 % then dilates at a steady rate, constant from 12 %.
inline Specimen cd(const std::string& id, double s3, double e0, double phi_pk) {
  const double s = std::sin(phi_pk * M_PI / 180.0), r = (1.0 + s) / (1.0 - s);
  const double qpk = s3 * (r - 1.0), pend = s3 / (1.0 - kM / 3.0), qend = kM * pend, eend = csl(pend);
  std::vector<double> ea, q, ev, e;
  for (int i = 0; i <= 40; ++i) {
    const double x = 0.005 * i;
    ea.push_back(x);
    q.push_back(x <= 0.04 ? qpk * x / 0.04 : x <= 0.12 ? qpk + (qend - qpk) * (x - 0.04) / 0.08 : qend);
    ev.push_back(x <= 0.02 ? 0.5 * x : x <= 0.12 ? 0.01 - 0.2 * (x - 0.02) : 0.01 - 0.02);
    e.push_back(x <= 0.12 ? e0 + (eend - e0) * x / 0.12 : eend);
  }
  return make_specimen(id, ShearType::cd, s3, ea, q, ev, {}, e);
}

}  // namespace sand_hand

}  // namespace triaxcal::test
