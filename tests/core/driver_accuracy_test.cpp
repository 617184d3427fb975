// Accuracy of the driver's error control: the simulated curves at the recorded points against
// closed forms (Mohr-Coulomb by hand calculation, Modified Cam-Clay undrained by Wood 1990) or,
// where no closed form exists, against the same run at a 1000x tighter tolerance.
//
// Material constants are invented round numbers, not from any real soil.
#include <catch2/catch.hpp>

#include <algorithm>
#include <cmath>
#include <functional>
#include <map>
#include <string>
#include <vector>

#include "modified_cam_clay/closed_form.hpp"
#include "tolerances.hpp"
#include "triaxcal/driver.hpp"
#include "triaxcal/models/registry.hpp"
#include "triaxcal/parameters.hpp"

using namespace triaxcal;

namespace {

std::unique_ptr<Model> make(const std::string& name, const std::map<std::string, double>& given) {
  const ModelEntry& e = find_model(name);
  return e.create(resolve_parameters(e.info(), given, "test"), "test");
}

// Mohr-Coulomb: E' 30 MPa, nu' 0.3, c' 5 kPa, phi' 32 deg, psi 6 deg (drained) or 0 (undrained).
constexpr double kMcE = 30000.0, kMcNu = 0.3, kMcC = 5.0, kMcPhi = 32.0, kMcPsi = 6.0, kMcS3 = 100.0;
std::unique_ptr<Model> mohr_coulomb(double psi) {
  return make("mohr_coulomb", {{"youngs_modulus", kMcE}, {"poissons_ratio", kMcNu}, {"cohesion", kMcC},
                               {"friction_angle", kMcPhi}, {"dilation_angle", psi}});
}

// Modified Cam-Clay: lambda 0.16, kappa 0.03, M 1.0, nu' 0.3 (the values of issue 12).
constexpr double kLambda = 0.16, kKappa = 0.03, kM = 1.0, kNu = 0.3;
std::unique_ptr<Model> cam_clay() {
  return make("modified_cam_clay",
              {{"lambda", kLambda}, {"kappa", kKappa}, {"critical_state_ratio", kM}, {"poissons_ratio", kNu}});
}

std::unique_ptr<Model> hyperbolic() { return make("hyperbolic_hardening", {}); }

TestProtocol shear(double p0, Drainage drainage, double strain, int records, double e0 = 0.9, double pc = kNotGiven) {
  TestProtocol p;
  p.name = "shear";
  p.initial.stress = triaxial_stress(p0, p0);
  p.initial.void_ratio = e0;
  p.initial.preconsolidation_pressure = pc;
  Stage s;
  s.type = StageType::shear;
  s.drainage = drainage;
  s.axial_strain = strain;
  s.steps = records;
  p.stages = {s};
  return p;
}

TestProtocol oedometer(double p0, double target, int records, double e0 = 0.9, double pc = kNotGiven) {
  TestProtocol p;
  p.name = "oedometer";
  p.initial.stress = triaxial_stress(p0, p0);
  p.initial.void_ratio = e0;
  p.initial.preconsolidation_pressure = pc;
  Stage s;
  s.type = StageType::oedometer;
  s.target_axial = target;
  s.steps = records;
  p.stages = {s};
  return p;
}

// The compared curves of a record: q, p', excess pore pressure, engineering stage volumetric and
// axial strain (the last is the response of a stress-controlled stage).
constexpr int kCurves = 5;
const char* const kCurveNames[kCurves] = {"q", "p'", "u", "eps_v", "eps_a"};
std::array<double, kCurves> curves_of(const StepRecord& r) {
  return {r.q, r.p, r.excess_pore_pressure, r.stage_volumetric_strain, r.stage_axial_strain};
}

// Largest |y - y_ref| over the records of the last stage, per curve, as a fraction of the range of
// y_ref over the stage; curves whose range is (near) zero are left out (0).
struct CurveErrors {
  std::array<double, kCurves> error{};
  double worst() const { return *std::max_element(error.begin(), error.end()); }
};

CurveErrors compare(const SimulationResult& r, const std::function<std::array<double, kCurves>(std::size_t)>& ref) {
  CurveErrors out;
  const auto& st = r.stages.back();
  const std::size_t first = static_cast<std::size_t>(st.first) - 1;  // the stage start record
  const std::size_t last = static_cast<std::size_t>(st.last);
  std::array<double, kCurves> lo, hi, worst{};
  lo.fill(1e300);
  hi.fill(-1e300);
  for (std::size_t j = first; j <= last; ++j) {
    const auto y = ref(j);
    for (int k = 0; k < kCurves; ++k) {
      lo[k] = std::min(lo[k], y[k]);
      hi[k] = std::max(hi[k], y[k]);
    }
  }
  for (std::size_t j = first + 1; j <= last; ++j) {
    const auto y = curves_of(r.steps[j]);
    const auto yr = ref(j);
    for (int k = 0; k < kCurves; ++k) worst[k] = std::max(worst[k], std::abs(y[k] - yr[k]));
  }
  for (int k = 0; k < kCurves; ++k) {
    const double range = hi[k] - lo[k];
    const bool strain = k >= 3;
    out.error[k] = range > (strain ? 1e-7 : 1e-6) ? worst[k] / range : 0.0;
  }
  return out;
}

CurveErrors against_run(const SimulationResult& r, const SimulationResult& reference) {
  REQUIRE(r.steps.size() == reference.steps.size());
  return compare(r, [&](std::size_t j) { return curves_of(reference.steps[j]); });
}

SimulationResult run(const Model& m, const TestProtocol& p, double tolerance, bool fixed = false) {
  DriverOptions o;
  o.tolerance = tolerance;
  o.fixed_steps = fixed;
  SimulationResult r = simulate(o, m, p);
  INFO(r.message);
  REQUIRE(r.ok());
  return r;
}

// Hand calculation, Mohr-Coulomb drained triaxial compression at constant s3' (natural strains,
// which the model integrates): linear elastic, q = E eps_a, eps_v = (1 - 2 nu) eps_a, up to
// q_f = (2 s3' sin phi + 2 c cos phi)/(1 - sin phi) (the Mohr-Coulomb criterion with s1' = s3' + q);
// then perfectly plastic at constant stress with the flow of the potential
// g = s1' - s3' - (s1' + s3') sin psi on the compression edge: d eps_v / d eps_a = -2 sin psi/(1 - sin psi).
std::array<double, kCurves> mc_drained_hand(double eps_a) {
  const double sp = std::sin(degrees_to_radians(kMcPhi)), cp = std::cos(degrees_to_radians(kMcPhi));
  const double spsi = std::sin(degrees_to_radians(kMcPsi));
  const double qf = (2 * kMcS3 * sp + 2 * kMcC * cp) / (1 - sp);
  const double eps_f = qf / kMcE;
  double q, ev;
  if (eps_a <= eps_f) {
    q = kMcE * eps_a;
    ev = (1 - 2 * kMcNu) * eps_a;
  } else {
    q = qf;
    ev = (1 - 2 * kMcNu) * eps_f - 2 * spsi / (1 - spsi) * (eps_a - eps_f);
  }
  return {q, kMcS3 + q / 3, 0.0, engineering_strain(ev), engineering_strain(eps_a)};
}

// Hand calculation, Mohr-Coulomb undrained (incompressible fluid, psi = 0) from p' = s3': no volume
// change, so p' stays at s3' while elastic (K' sees no strain) and on the envelope, where psi = 0
// keeps the plastic volume change zero; q = 3 G eps_a up to q_f = (6 p' sin phi + 6 c cos phi)/(3 - sin phi)
// (the criterion in triaxial compression in p'-q); the total radial stress is constant, so u = q/3.
std::array<double, kCurves> mc_undrained_hand(double eps_a) {
  const double sp = std::sin(degrees_to_radians(kMcPhi)), cp = std::cos(degrees_to_radians(kMcPhi));
  const double g = kMcE / (2 * (1 + kMcNu));
  const double qf = (6 * kMcS3 * sp + 6 * kMcC * cp) / (3 - sp);
  const double q = std::min(3 * g * eps_a, qf);
  return {q, kMcS3, q / 3, 0.0, engineering_strain(eps_a)};
}

// Modified Cam-Clay undrained from (p'_0, 0) with p'_c = 300 kPa: the closed form of Wood (1990)
// (modified_cam_clay/closed_form.hpp) at the record's natural axial strain; constant volume, so the
// void ratio stays e0 and so does the elastic law; u = p0 + q/3 - p' (total radial stress constant).
std::array<double, kCurves> mcc_undrained_closed(const std::vector<mcc_reference::PathPoint>& path, double p0,
                                                 double eps_a) {
  const mcc_reference::PathPoint pt = mcc_reference::at_axial_strain(path, eps_a);
  return {pt.q, pt.p, p0 + pt.q / 3 - pt.p, 0.0, engineering_strain(eps_a)};
}

mcc_reference::Material mcc_material(double e0) {
  mcc_reference::Material m;
  m.lambda = kLambda;
  m.kappa = kKappa;
  m.m = kM;
  m.e0 = e0;
  m.poissons_ratio = kNu;
  return m;
}

constexpr double kReferenceFactor = 1000.0;  // the reference run's tolerance is 1000x tighter

void check_against_tight(const Model& m, const TestProtocol& p) {
  const double tol = DriverOptions{}.tolerance;
  const SimulationResult r = run(m, p, tol);
  const SimulationResult ref = run(m, p, tol / kReferenceFactor);
  const CurveErrors e = against_run(r, ref);
  for (int k = 0; k < kCurves; ++k) {
    INFO(p.name << ": " << kCurveNames[k]);
    CHECK(e.error[k] <= test::kCurveRange);
  }
}

}  // namespace

TEST_CASE("Mohr-Coulomb drained and undrained shear at the default tolerance follow the hand calculation to round-off") {
  // Linear elasticity and perfect plasticity: an increment across the yield point returns exactly,
  // so the error control accepts large substeps and the records in them are exact too.
  const SimulationResult cd = run(*mohr_coulomb(kMcPsi), shear(kMcS3, Drainage::drained, 0.1, 40), DriverOptions{}.tolerance);
  const CurveErrors e_cd = compare(cd, [&](std::size_t j) { return mc_drained_hand(cd.steps[j].axial_strain); });
  const SimulationResult cu = run(*mohr_coulomb(0.0), shear(kMcS3, Drainage::undrained, 0.05, 40), DriverOptions{}.tolerance);
  const CurveErrors e_cu = compare(cu, [&](std::size_t j) { return mc_undrained_hand(cu.steps[j].axial_strain); });
  CHECK(e_cd.worst() <= test::kExact);
  CHECK(e_cu.worst() <= test::kExact);
  // The kink is between records: the record right after it is already on the plateau.
  CHECK(cd.stages[0].peak_q == Approx(mc_drained_hand(0.1)[0]).epsilon(test::kExact));
}

TEST_CASE("records closer than the tolerance needs are integrated in groups: Mohr-Coulomb exact at under 1.2 model calls a record, MCC and the hyperbolic model within 0.1 % of range of a tighter run") {
  // 400 records, about the density of a logged lab curve. A group is one substep over up to 16
  // records against the chain of substeps ending on each (DEVELOPERS.md "The driver"). Groups are
  // taken only where the last error allows 10x the record spacing, and a turn of the response inside
  // a group (yield onset) rejects it through the chain's linearisation gap: without both, the MCC
  // OCR 6 record after yield at 30 records was 0.3 % of the q range off (found while building this).
  // No failing case is known with the margin alone; the gap check is kept as a guard (it costs
  // Mohr-Coulomb about 5 % more calls).
  const SimulationResult cd = run(*mohr_coulomb(kMcPsi), shear(kMcS3, Drainage::drained, 0.1, 400), DriverOptions{}.tolerance);
  const SimulationResult cu = run(*mohr_coulomb(0.0), shear(kMcS3, Drainage::undrained, 0.05, 400), DriverOptions{}.tolerance);
  CHECK(compare(cd, [&](std::size_t j) { return mc_drained_hand(cd.steps[j].axial_strain); }).worst() <= test::kExact);
  CHECK(compare(cu, [&](std::size_t j) { return mc_undrained_hand(cu.steps[j].axial_strain); }).worst() <= test::kExact);
  INFO("model calls: drained " << cd.model_calls << ", undrained " << cu.model_calls);
  CHECK(cd.model_calls <= 1.2 * 400);
  CHECK(cu.model_calls <= 1.2 * 400);
  TestProtocol oc = shear(50.0, Drainage::undrained, 0.15, 400, 0.9242, 300.0);
  oc.name = "MCC undrained OCR 6, 400 records";
  check_against_tight(*cam_clay(), oc);
  TestProtocol nc = shear(200, Drainage::drained, 0.2, 400, 0.9, 200.0);
  nc.name = "MCC drained NC, 400 records";
  check_against_tight(*cam_clay(), nc);
  TestProtocol hcd = shear(200, Drainage::drained, 0.15, 400);
  hcd.name = "hyperbolic CD, 400 records";
  check_against_tight(*hyperbolic(), hcd);
  TestProtocol hoc = shear(100, Drainage::drained, 0.15, 400, 0.9, 400.0);
  hoc.name = "hyperbolic CD OCR 4, 400 records";
  check_against_tight(*hyperbolic(), hoc);
}

TEST_CASE("Modified Cam-Clay undrained shear at OCR 1 and 2 at the default tolerance is within 0.1 % of each curve's range of the closed form, at OCR 6 of a 1000x tighter run") {
  // At OCR 6 the converged model and closed_form.hpp differ by 0.25 % of the p' range just after
  // yield (with or without error control), so the closed form is no 0.1 % reference there.
  TestProtocol oc = shear(50.0, Drainage::undrained, 0.15, 30, 0.9242, 300.0);
  oc.name = "undrained OCR 6";
  check_against_tight(*cam_clay(), oc);
  for (double ocr : {1.0, 2.0}) {
    const double p0 = 300.0 / ocr;
    const TestProtocol p = shear(p0, Drainage::undrained, 0.15, 30, 0.9242, 300.0);
    const SimulationResult r = run(*cam_clay(), p, DriverOptions{}.tolerance);
    const auto path = mcc_reference::undrained_path(mcc_material(0.9242), p0, 300.0);
    const CurveErrors e = compare(r, [&](std::size_t j) { return mcc_undrained_closed(path, p0, r.steps[j].axial_strain); });
    for (int k = 0; k < kCurves; ++k) {
      INFO("OCR " << ocr << ": " << kCurveNames[k]);
      CHECK(e.error[k] <= test::kCurveRange);
    }
  }
}

TEST_CASE("Modified Cam-Clay drained shear and oedometer loading at the default tolerance are within 0.1 % of range of a 1000x tighter run") {
  TestProtocol nc = shear(200, Drainage::drained, 0.2, 30, 0.9, 200.0);
  nc.name = "drained NC";
  TestProtocol oc = shear(50, Drainage::drained, 0.2, 30, 0.9, 300.0);
  oc.name = "drained OCR 6";
  TestProtocol oed = oedometer(100, 800, 30, 0.9, 100.0);
  check_against_tight(*cam_clay(), nc);
  check_against_tight(*cam_clay(), oc);
  check_against_tight(*cam_clay(), oed);
}

TEST_CASE("the hyperbolic hardening model at the default tolerance is within 0.1 % of range of a 1000x tighter run: CD, CU, overconsolidated CD, oedometer") {
  TestProtocol cd = shear(200, Drainage::drained, 0.15, 30);
  cd.name = "CD";
  TestProtocol cu = shear(200, Drainage::undrained, 0.15, 30);
  cu.name = "CU";
  TestProtocol oc = shear(100, Drainage::drained, 0.15, 30, 0.9, 400.0);
  oc.name = "CD OCR 4";
  TestProtocol oed = oedometer(100, 800, 30);
  check_against_tight(*hyperbolic(), cd);
  check_against_tight(*hyperbolic(), cu);
  check_against_tight(*hyperbolic(), oc);
  check_against_tight(*hyperbolic(), oed);
}

TEST_CASE("a tighter tolerance gives a smaller error: 1e-3 to 1e-5 cuts it by at least 10 for MCC and the hyperbolic model") {
  struct Case {
    std::unique_ptr<Model> model;
    TestProtocol protocol;
  };
  Case cases[] = {{cam_clay(), shear(300, Drainage::undrained, 0.15, 30, 0.9242, 300.0)},
                  {cam_clay(), shear(200, Drainage::drained, 0.2, 30, 0.9, 200.0)},
                  {hyperbolic(), shear(200, Drainage::drained, 0.15, 30)}};
  for (const Case& c : cases) {
    const SimulationResult ref = run(*c.model, c.protocol, 1e-8);
    const double loose = against_run(run(*c.model, c.protocol, 1e-3), ref).worst();
    const double tight = against_run(run(*c.model, c.protocol, 1e-5), ref).worst();
    INFO("loose " << loose << ", tight " << tight);
    CHECK(loose > 0.0);
    CHECK(tight * 10 <= loose);
  }
}

TEST_CASE("without extrapolation the error control keeps the two halves: first order, a larger error at the same tolerance") {
  const auto m = cam_clay();
  const TestProtocol p = shear(200, Drainage::drained, 0.2, 30, 0.9, 200.0);
  const SimulationResult ref = run(*m, p, 1e-8);
  DriverOptions halves;
  halves.extrapolate = false;
  const SimulationResult r = simulate(halves, *m, p);
  REQUIRE(r.ok());
  const double first_order = against_run(r, ref).worst();
  const double second_order = against_run(run(*m, p, halves.tolerance), ref).worst();
  INFO("halves " << first_order << ", extrapolated " << second_order);
  CHECK(second_order * 5 <= first_order);
}

TEST_CASE("fixed steps: one increment a record step, first order, the error halves when the steps double") {
  const auto m = cam_clay();
  const SimulationResult ref = run(*m, shear(200, Drainage::drained, 0.2, 20, 0.9, 200.0), 1e-8);
  double errors[2];
  for (int i = 0; i < 2; ++i) {
    const int per_record = 10 << i;
    const SimulationResult f = run(*m, shear(200, Drainage::drained, 0.2, 20 * per_record, 0.9, 200.0), 1e-4, true);
    CHECK(f.substeps == 20 * per_record);
    CHECK(f.rejected_substeps == 0);
    SimulationResult thin = f;
    thin.steps.clear();
    for (std::size_t j = 0; j < f.steps.size(); j += static_cast<std::size_t>(per_record)) thin.steps.push_back(f.steps[j]);
    thin.stages.back().first = 1;
    thin.stages.back().last = 20;
    errors[i] = against_run(thin, ref).worst();
  }
  INFO(errors[0] << " " << errors[1]);
  CHECK(errors[0] / errors[1] == Approx(2.0).epsilon(0.15));
}
