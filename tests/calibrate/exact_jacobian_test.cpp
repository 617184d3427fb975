// Exact Jacobians in the calibration (issue 14): with a model that has a derivative version, the
// least-squares stage and the intervals take the Jacobian from dual simulations along the substeps of
// the point (CalibrationOptions::sensitivities = exact), else finite differences. Checked with the
// invented test model of tests/support/soft_model.hpp (a hypoelastic softening model, not a soil):
//  - a noise-free round trip recovers the invented truth from a far start with exact Jacobians only
//    (no finite-difference Jacobian taken), as it does with finite differences;
//  - the standard errors at the optimum from the exact Jacobian equal those from central differences
//    (the same formula; the Jacobians differ by the differences' truncation error only);
//  - a tied parameter takes its expression's derivative (chain rule through the tie);
//  - with a model without a derivative version, `exact` falls back to finite differences and says so
//    in the counts.
// The reference curves come from a run 1000x tighter than the fit's tolerance (synthetic.hpp).
#include <catch2/catch.hpp>

#include <cmath>

#include "soft_model.hpp"
#include "synthetic.hpp"
#include "triaxcal/calibrate.hpp"

using namespace triaxcal;
using namespace triaxcal::test;

namespace {

const std::vector<double> kTruth = {9000.0, 0.3, 0.6, 4.0};

CalibrationProblem soft_problem(const std::vector<double>& truth = kTruth) {
  CalibrationProblem p;
  p.model = &soft_info();
  p.create = [](const ParameterValues& v) { return std::make_unique<Soft>(v); };
  const Soft model(truth);
  int k = 0;
  for (double p0 : {80.0, 200.0}) {
    const std::string id = "CD-" + std::to_string(k++);
    p.tests.push_back(synthetic_test(id, consolidated_shear(id, p0, Drainage::drained, 0.06, 40), model,
                                     {Quantity::deviator_stress, Quantity::volumetric_strain}, 0, nullptr));
  }
  TestProtocol cu = consolidated_shear("CU", 150.0, Drainage::undrained, 0.05, 30);
  cu.pore_fluid_stiffness = 3e5;  // compressible: the driver solves the radial rows with the pore pressure
  p.tests.push_back(synthetic_test("CU", cu, model, {Quantity::deviator_stress, Quantity::excess_pore_pressure}, 0,
                                   nullptr));
  p.parameters = {
      free_parameter("shear_modulus_ref", 2000.0, 40000.0, 4000.0, ParameterScale::log),
      free_parameter("poissons_ratio", 0.05, 0.45, 0.2),
      free_parameter("pressure_exponent", 0.0, 1.0, 0.3),
      free_parameter("softening_rate", 0.0, 20.0, 1.0),
  };
  return p;
}

CalibrationOptions options(Sensitivities s) {
  CalibrationOptions o;
  o.sensitivities = s;
  o.threads = 2;
  o.starts = 1;
  return o;
}

}  // namespace

TEST_CASE("exact Jacobians: a noise-free round trip recovers the invented truth, no finite differences taken") {
  const CalibrationProblem problem = soft_problem();
  const CalibrationSummary exact = calibrate(options(Sensitivities::exact), problem);
  INFO(exact.message);
  REQUIRE(exact.outcome == CalibrationOutcome::converged);
  CHECK(exact.exact_jacobians > 0);
  CHECK(exact.difference_jacobians == 0);
  for (std::size_t i = 0; i < kTruth.size(); ++i) CHECK(exact.values[i] == Approx(kTruth[i]).epsilon(1e-4));

  const CalibrationSummary fd = calibrate(options(Sensitivities::finite_differences), problem);
  REQUIRE(fd.outcome == CalibrationOutcome::converged);
  CHECK(fd.exact_jacobians == 0);
  CHECK(fd.difference_jacobians > 0);
  // Equal or lower objective with exact derivatives (both reach the data to rounding here).
  CHECK(exact.objective <= fd.objective + 1e-12);
}

TEST_CASE("exact Jacobians: standard errors at the optimum agree with those from finite differences") {
  // Noisy data (lab-precision noise on the invented truth's curves), so that the intervals are not
  // zero. Both fits end at the same optimum; the finite-difference fit's intervals come from its
  // forward differences (step 1e-4 of the box), so they agree to about that step.
  CalibrationProblem problem = soft_problem();
  Noise noise(7);
  problem.tests.clear();
  const Soft model(kTruth);
  for (double p0 : {80.0, 200.0}) {
    const std::string id = "CD-" + std::to_string(static_cast<int>(p0));
    problem.tests.push_back(synthetic_test(id, consolidated_shear(id, p0, Drainage::drained, 0.06, 40), model,
                                           {Quantity::deviator_stress, Quantity::volumetric_strain}, 0, &noise));
  }
  const CalibrationSummary exact = calibrate(options(Sensitivities::exact), problem);
  const CalibrationSummary fd = calibrate(options(Sensitivities::finite_differences), problem);
  REQUIRE(exact.outcome == CalibrationOutcome::converged);
  REQUIRE(fd.outcome == CalibrationOutcome::converged);
  CHECK(exact.objective <= fd.objective * (1.0 + 1e-9));
  REQUIRE(exact.covariance.rows() == 4);
  REQUIRE(fd.covariance.rows() == 4);
  for (int i = 0; i < 4; ++i) {
    INFO("parameter " << i << ": " << exact.values[static_cast<std::size_t>(i)] << " and "
                      << fd.values[static_cast<std::size_t>(i)]);
    CHECK(exact.values[static_cast<std::size_t>(i)] == Approx(fd.values[static_cast<std::size_t>(i)]).epsilon(1e-5));
    CHECK(std::sqrt(exact.covariance(i, i)) > 0.0);
    CHECK(std::sqrt(exact.covariance(i, i)) == Approx(std::sqrt(fd.covariance(i, i))).epsilon(2e-3));
  }
}

TEST_CASE("exact Jacobians: a tied parameter takes its expression's derivative") {
  // softening_rate tied to 4e-4 * shear_modulus_ref: the data's truth keeps that relation.
  const std::vector<double> truth = {10000.0, 0.3, 0.6, 4.0};
  CalibrationProblem problem = soft_problem(truth);
  problem.parameters[3] = ParameterSpec{};
  problem.parameters[3].name = "softening_rate";
  problem.parameters[3].status = ParameterStatus::tied;
  problem.parameters[3].expression = "4e-4 * shear_modulus_ref";
  const CalibrationSummary exact = calibrate(options(Sensitivities::exact), problem);
  INFO(exact.message);
  REQUIRE(exact.outcome == CalibrationOutcome::converged);
  CHECK(exact.difference_jacobians == 0);
  for (std::size_t i = 0; i < 3; ++i) CHECK(exact.values[i] == Approx(truth[i]).epsilon(1e-4));
}

TEST_CASE("exact Jacobians: a model without a derivative version falls back to finite differences") {
  // The same model without its derivative version.
  class Plain final : public Model {
   public:
    explicit Plain(const ParameterValues& v) : soft_(v) {}
    const ModelInfo& info() const override { return soft_.info(); }
    void initialise(const InitialConditions& c, MaterialState& s) const override { soft_.initialise(c, s); }
    IntegrationResult integrate(const MaterialState& in, const Vec6& de, MaterialState& out,
                                Mat6& tangent) const override {
      return soft_.integrate(in, de, out, tangent);
    }

   private:
    Soft soft_;
  };
  CalibrationProblem problem = soft_problem();
  problem.create = [](const ParameterValues& v) { return std::make_unique<Plain>(v); };
  const CalibrationSummary s = calibrate(options(Sensitivities::exact), problem);
  REQUIRE(s.outcome == CalibrationOutcome::converged);
  CHECK(s.exact_jacobians == 0);
  CHECK(s.difference_jacobians > 0);
  for (std::size_t i = 0; i < kTruth.size(); ++i) CHECK(s.values[i] == Approx(kTruth[i]).epsilon(1e-4));
}
