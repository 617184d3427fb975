#include "triaxcal/driver.hpp"

#include <algorithm>
#include <cmath>
#include <sstream>

#include "triaxcal/error.hpp"
#include "triaxcal/parameters.hpp"

namespace triaxcal {

std::string to_string(StageType type) {
  switch (type) {
    case StageType::isotropic_consolidation: return "isotropic_consolidation";
    case StageType::anisotropic_consolidation: return "anisotropic_consolidation";
    case StageType::k0_consolidation: return "k0_consolidation";
    case StageType::oedometer: return "oedometer";
    case StageType::shear: return "shear";
    case StageType::constant_p_shear: return "constant_p_shear";
    case StageType::unload_reload: return "unload_reload";
  }
  return "unknown";
}

std::string to_string(StopCriterion stop) {
  switch (stop) {
    case StopCriterion::none: return "none";
    case StopCriterion::peak_deviator: return "peak_deviator";
    case StopCriterion::peak_stress_ratio: return "peak_stress_ratio";
    case StopCriterion::axial_strain: return "axial_strain";
  }
  return "unknown";
}

void DriverOptions::validate() const {
  auto fail = [](const std::string& field, double value, const std::string& rule) {
    throw InputError("driver options: " + field + " = " + format_number(value) + " " + rule);
  };
  if (max_newton_iterations < 1) fail("max_newton_iterations", max_newton_iterations, "must be at least 1");
  if (!(newton_tolerance > 0.0 && newton_tolerance < 1e-2))
    fail("newton_tolerance", newton_tolerance, "must be in (0, 0.01)");
  if (max_cuts < 0 || max_cuts > 40) fail("max_cuts", max_cuts, "must be in [0, 40]");
  if (max_total_cuts < 0) fail("max_total_cuts", max_total_cuts, "must be at least 0");
}

void SimulationResult::clear() {
  std::string kept_message = std::move(message);
  std::vector<StepRecord> kept_steps = std::move(steps);
  std::vector<StageSummary> kept_stages = std::move(stages);
  *this = SimulationResult{};
  kept_message.clear();
  kept_steps.clear();
  kept_stages.clear();
  message = std::move(kept_message);
  steps = std::move(kept_steps);
  stages = std::move(kept_stages);
}

std::string SimulationResult::brief() const {
  std::ostringstream out;
  if (termination == Termination::completed) {
    out << "completed: " << (steps.empty() ? 0 : steps.size() - 1) << " steps in " << stages.size()
        << " stages, " << total_cuts << " increment cuts, " << model_calls << " model calls";
  } else {
    out << "failed: " << message;
  }
  return out.str();
}

namespace {

bool given(double v) { return !std::isnan(v); }

void require(bool ok, int stage, const std::string& key, const std::string& what) {
  if (!ok) throw InputError("stages[" + std::to_string(stage) + "]: " + key + " " + what);
}

}  // namespace

void validate_protocol(const TestProtocol& protocol) {
  if (!std::isfinite(protocol.back_pressure)) throw InputError("back_pressure must be a finite number (kPa)");
  if (!(protocol.pore_fluid_stiffness > 0.0))
    throw InputError("pore_fluid_stiffness = " + format_number(protocol.pore_fluid_stiffness) +
                     " must be positive (kPa)");
  for (int i = 0; i < 6; ++i)
    if (!std::isfinite(protocol.initial.stress[i])) throw InputError("initial stress must be finite (kPa)");
  if (protocol.stages.empty()) throw InputError("stages: the protocol has no stage");
  for (std::size_t k = 0; k < protocol.stages.size(); ++k) {
    const Stage& s = protocol.stages[k];
    const int i = static_cast<int>(k);
    require(s.steps >= 1 && s.steps <= 10000000, i, "steps", "= " + std::to_string(s.steps) + " must be in [1, 10000000]");
    switch (s.type) {
      case StageType::isotropic_consolidation:
        require(given(s.target_p) && s.target_p > 0.0, i, "p", "(target mean effective stress, kPa) must be given and positive");
        break;
      case StageType::anisotropic_consolidation:
        require(given(s.target_axial) && s.target_axial > 0.0, i, "axial_stress", "(kPa) must be given and positive");
        require(given(s.target_radial) && s.target_radial > 0.0, i, "radial_stress", "(kPa) must be given and positive");
        break;
      case StageType::k0_consolidation:
        require(given(s.target_axial) && s.target_axial > 0.0, i, "axial_stress", "(kPa) must be given and positive");
        break;
      case StageType::oedometer:
        require(given(s.target_axial) != given(s.axial_strain), i, "axial_stress",
                "(kPa) or axial_strain (decimal): exactly one must be given");
        if (given(s.target_axial)) require(s.target_axial > 0.0, i, "axial_stress", "(kPa) must be positive");
        break;
      case StageType::shear:
      case StageType::constant_p_shear:
        require(given(s.axial_strain) && s.axial_strain != 0.0 && std::abs(s.axial_strain) < 1.0, i,
                "axial_strain", "(decimal, signed: positive = compression) must be given, non-zero and below 1 in magnitude");
        if (s.type == StageType::constant_p_shear)
          require(s.drainage == Drainage::drained, i, "drainage", "must be drained for a constant-p' shear");
        if (s.stop == StopCriterion::axial_strain)
          require(given(s.stop_value) && s.stop_value > 0.0, i, "stop.value", "(decimal axial strain) must be given and positive");
        break;
      case StageType::unload_reload:
        require(given(s.target_deviator), i, "deviator_stress", "(kPa, q at the bottom of the loop) must be given");
        break;
    }
    const bool consolidation = s.type != StageType::shear && s.type != StageType::unload_reload;
    if (consolidation)
      require(s.drainage == Drainage::drained, i, "drainage", "must be drained for a " + to_string(s.type) + " stage");
  }
}

namespace {

// One step under mixed control: row i reads a_i . d_eps + c_i . sigma_new = b_i, with d_eps the
// strain increment of the step. Rows with `pure[i]` prescribe d_eps_i = b_i; the others are solved
// by Newton on the strain components of the same index.
struct Control {
  Mat6 a = Mat6::Zero();
  Mat6 c = Mat6::Zero();
  Vec6 b = Vec6::Zero();
  std::array<bool, 6> pure{};
  std::array<int, 6> free{};
  int nfree = 0;
  // Targets move linearly over a stage: b_i = from_i + f (to_i - from_i) - (pore_i ? u : 0), with f
  // the fraction of the stage at the end of the step and u the pore pressure at its start.
  Vec6 from = Vec6::Zero();
  Vec6 to = Vec6::Zero();
  std::array<bool, 6> pore{};
  // The nonzero entries of the free rows, in the order of `free` (set by finish()): the hot loop
  // reads two or three coefficients a row instead of twelve.
  struct SparseRow {
    int n = 0;
    std::array<int, 6> index{};
    std::array<double, 6> value{};
    double abs_sum = 0.0;
  };
  std::array<SparseRow, 6> a_rows{}, c_rows{};

  void reset() {
    a.setIdentity();
    c.setZero();
    from.setZero();
    to.setZero();
    pure.fill(true);
    pore.fill(false);
  }
  void strain(int i, double d) {
    a.row(i).setZero();
    c.row(i).setZero();
    a(i, i) = 1.0;
    from[i] = to[i] = d;
    pure[i] = true;
  }
  void mixed(int i, const Vec6& arow, const Vec6& crow, double b_from, double b_to, bool minus_pore = false) {
    a.row(i) = arow.transpose();
    c.row(i) = crow.transpose();
    from[i] = b_from;
    to[i] = b_to;
    pure[i] = false;
    pore[i] = minus_pore;
  }
  void effective_stress(int i, double b_from, double b_to) { mixed(i, Vec6::Zero(), Vec6::Unit(i), b_from, b_to); }
  void finish() {
    nfree = 0;
    for (int i = 0; i < 6; ++i)
      if (!pure[i]) free[nfree++] = i;
    auto sparse = [](const Mat6& m, int i, SparseRow& row) {
      row = SparseRow{};
      for (int j = 0; j < 6; ++j)
        if (m(i, j) != 0.0) {
          row.index[row.n] = j;
          row.value[row.n++] = m(i, j);
          row.abs_sum += std::abs(m(i, j));
        }
    };
    for (int ii = 0; ii < nfree; ++ii) {
      sparse(a, free[ii], a_rows[ii]);
      sparse(c, free[ii], c_rows[ii]);
    }
    for (int i = 0; i < 6; ++i) {
      pure_mask[i] = pure[i] ? 1.0 : 0.0;
      pore_mask[i] = pore[i] ? 1.0 : 0.0;
    }
  }
  // 1 on the rows that are pure / subtract the pore pressure, else 0 (set by finish()).
  Vec6 pure_mask = Vec6::Zero();
  Vec6 pore_mask = Vec6::Zero();
  void set_targets(double f, double u) { b = from + f * (to - from) - u * pore_mask; }
};

// Gaussian elimination with partial pivoting on the K x K leading block (K <= 6), solving in place
// into b. Written out because the systems are 1 to 3 unknowns in the hot loop, where Eigen's
// dynamic-size LU cost a third of a drained increment; K is a template argument so that the loops
// unroll (solve_small dispatches). Returns false when a pivot falls below 1e-13 of the largest
// entry (singular for this control).
template <int K>
bool solve_fixed(double (&a)[6][6], double (&b)[6]) {
  double largest = 0.0;
  for (int i = 0; i < K; ++i)
    for (int j = 0; j < K; ++j) largest = std::max(largest, std::abs(a[i][j]));
  if (!(largest > 0.0) || !std::isfinite(largest)) return false;
  const double tiny = 1e-13 * largest;
  for (int col = 0; col < K; ++col) {
    int pivot = col;
    for (int i = col + 1; i < K; ++i)
      if (std::abs(a[i][col]) > std::abs(a[pivot][col])) pivot = i;
    if (!(std::abs(a[pivot][col]) > tiny)) return false;
    if (pivot != col) {
      for (int j = 0; j < K; ++j) std::swap(a[col][j], a[pivot][j]);
      std::swap(b[col], b[pivot]);
    }
    for (int i = col + 1; i < K; ++i) {
      const double f = a[i][col] / a[col][col];
      for (int j = col; j < K; ++j) a[i][j] -= f * a[col][j];
      b[i] -= f * b[col];
    }
  }
  for (int i = K - 1; i >= 0; --i) {
    double sum = b[i];
    for (int j = i + 1; j < K; ++j) sum -= a[i][j] * b[j];
    b[i] = sum / a[i][i];
  }
  return true;
}

// Two unknowns (every drained triaxial stage): Cramer's rule with one division instead of three
// in a dependent chain, and the same singularity test as the elimination (first pivot the larger
// of the first column, second pivot det / first).
template <>
bool solve_fixed<2>(double (&a)[6][6], double (&b)[6]) {
  const double largest = std::max(std::max(std::abs(a[0][0]), std::abs(a[0][1])),
                                  std::max(std::abs(a[1][0]), std::abs(a[1][1])));
  if (!(largest > 0.0) || !std::isfinite(largest)) return false;
  const double tiny = 1e-13 * largest;
  const double first = std::max(std::abs(a[0][0]), std::abs(a[1][0]));
  const double det = a[0][0] * a[1][1] - a[0][1] * a[1][0];
  if (!(first > tiny) || !(std::abs(det) > tiny * first)) return false;
  const double inv = 1.0 / det;
  const double x0 = (b[0] * a[1][1] - a[0][1] * b[1]) * inv;
  const double x1 = (a[0][0] * b[1] - b[0] * a[1][0]) * inv;
  b[0] = x0;
  b[1] = x1;
  return true;
}

bool solve_small(double (&a)[6][6], double (&b)[6], int k) {
  switch (k) {
    case 1: return solve_fixed<1>(a, b);
    case 2: return solve_fixed<2>(a, b);
    case 3: return solve_fixed<3>(a, b);
    case 4: return solve_fixed<4>(a, b);
    case 5: return solve_fixed<5>(a, b);
    case 6: return solve_fixed<6>(a, b);
  }
  return false;
}

class Runner {
 public:
  Runner(const DriverOptions& options, const Model& model, const TestProtocol& protocol, SimulationResult& result)
      : opt_(options), model_(model), protocol_(protocol), result_(result) {}
  Runner(const Runner&) = delete;  // holds pointers into itself
  Runner& operator=(const Runner&) = delete;

  void run();

 private:
  // Stage constants, fixed at the start of a stage.
  struct StageStart {
    Vec6 stress;         // effective
    double u = 0.0;      // absolute pore pressure
    Vec6 cell;           // total stress on the boundary (effective + u) at stage start
    double p = 0.0;
    double q = 0.0;
  };

  bool run_stage(int index);
  bool step(int stage, int step_in_stage, const Control& control, Drainage drainage);
  bool substep(const Control& control, const Vec6& cs_start, double s0, double s1, const Vec6& d_acc,
               Vec6& d_eps, MaterialState& out, Mat6& tangent, bool elastic_predictor);
  template <int K>
  bool newton(const Control& control, const Vec6& cs_start, double s0, double s1, const Vec6& d_acc, Vec6& d,
              MaterialState& out, Mat6& tangent, bool elastic_predictor);
  void record(int stage, int step, int cuts);
  void fail(int stage, int step, const std::string& why);
  void build_control(const Stage& stage, const StageStart& start, int phase, Control& control) const;

  const DriverOptions& opt_;
  const Model& model_;
  const TestProtocol& protocol_;
  SimulationResult& result_;

  // The converged state and tangent and the spare pair a step writes into: swapped on success, not
  // copied (the pair is 400 bytes, a tenth of a drained Mohr-Coulomb increment).
  MaterialState states_[2];
  Mat6 tangents_[2] = {Mat6::Zero(), Mat6::Zero()};
  MaterialState* state_ = &states_[0];
  MaterialState* spare_state_ = &states_[1];
  Mat6* tangent_ = &tangents_[0];  // last converged tangent (predictor)
  Mat6* spare_tangent_ = &tangents_[1];
  Vec6 strain_ = Vec6::Zero();  // total strain since the start of the protocol
  Vec6 stage_strain_start_ = Vec6::Zero();  // strain_ at the start of the current stage
  Mat6 restart_tangent_ = Mat6::Zero();  // tangent of a zero increment (fallback predictor)
  double u_ = 0.0;              // absolute pore pressure
  double e0_ = kNotGiven;
  bool incompressible_ = true;
  StageStart start_;
};

void Runner::record(int stage, int step_in_stage, int cuts) {
  // Built in place from every member, in declaration order: an emplace_back() without arguments
  // would value-initialise the 160-byte record before it is filled.
  const double eps_v = volumetric_strain(strain_);
  const TriaxialInvariants t = triaxial_invariants(state_->stress);
  result_.steps.emplace_back(stage, step_in_stage, strain_[0], 0.5 * (strain_[1] + strain_[2]), eps_v,
                             engineering_strain(strain_[0] - stage_strain_start_[0]),
                             engineering_strain(eps_v - volumetric_strain(stage_strain_start_)), t.axial,
                             t.radial, t.p, t.q, u_ - protocol_.back_pressure,
                             given(e0_) ? (1.0 + e0_) * std::exp(-eps_v) - 1.0 : kNotGiven,
                             t.radial != 0.0 ? t.axial / t.radial : kNotGiven, cuts, state_->internal);
}

void Runner::fail(int stage, int step_in_stage, const std::string& why) {
  std::ostringstream m;
  m << "stage " << stage << " (" << to_string(protocol_.stages[stage].type) << "), step " << step_in_stage
    << " of " << protocol_.stages[stage].steps << ", axial strain " << format_number(strain_[0]) << ": " << why;
  result_.termination = Termination::failed;
  result_.message = m.str();
  result_.failed_stage = stage;
  result_.failed_step = step_in_stage;
}

// Control of a stage (phase 1: the reload half of a loop); targets run from the stage start
// (f = 0) to the stage end (f = 1), see Control::set_targets.
void Runner::build_control(const Stage& stage, const StageStart& s, int phase, Control& c) const {
  c.reset();  // all rows: zero strain increment
  const Vec6 m = identity_voigt();
  const double kf = protocol_.pore_fluid_stiffness;
  // The specimen is axisymmetric and the models are isotropic, so the radial directions share one
  // strain: row 2 keeps eps_22 = eps_33 and row 1 controls the mean radial stress. (Controlling
  // s_22' and s_33' separately is singular on the triaxial edges of a perfectly plastic model,
  // where the split of the flow between the two planes is indeterminate.)
  Vec6 radial_mean = Vec6::Zero();
  radial_mean[1] = radial_mean[2] = 0.5;
  const Vec6 radial_split = Vec6::Unit(1) - Vec6::Unit(2);
  const double cell_radial = 0.5 * (s.cell[1] + s.cell[2]);
  auto equal_radial_strains = [&] { c.mixed(2, radial_split, Vec6::Zero(), 0.0, 0.0); };
  auto drained_radial = [&](double from, double to) {
    c.mixed(1, Vec6::Zero(), radial_mean, from, to);
    equal_radial_strains();
  };
  // Undrained boundary with constant total radial stress: s_r' + u = cell, with
  // u = u_step_start + K_f/n * d_eps_v for a compressible pore fluid.
  auto undrained_radial = [&] {
    c.mixed(1, kf * m, radial_mean, cell_radial, cell_radial, true);
    equal_radial_strains();
  };
  const double radial0 = 0.5 * (s.stress[1] + s.stress[2]);
  switch (stage.type) {
    case StageType::isotropic_consolidation:
      c.effective_stress(0, s.stress[0], stage.target_p);
      drained_radial(radial0, stage.target_p);
      break;
    case StageType::anisotropic_consolidation:
      c.effective_stress(0, s.stress[0], stage.target_axial);
      drained_radial(radial0, stage.target_radial);
      break;
    case StageType::k0_consolidation:
    case StageType::oedometer:
      if (given(stage.target_axial))
        c.effective_stress(0, s.stress[0], stage.target_axial);
      else
        c.strain(0, natural_strain(stage.axial_strain) / stage.steps);
      break;
    case StageType::shear: {
      const double de = natural_strain(stage.axial_strain) / stage.steps;
      c.strain(0, de);
      if (stage.drainage == Drainage::drained) {
        drained_radial(radial0, radial0);
      } else if (incompressible_) {
        // No volume change and equal radial strains: fully strain-controlled, no iteration.
        c.strain(1, -0.5 * de);
        c.strain(2, -0.5 * de);
      } else {
        undrained_radial();
      }
      break;
    }
    case StageType::constant_p_shear: {
      c.strain(0, natural_strain(stage.axial_strain) / stage.steps);
      Vec6 third = Vec6::Zero();
      third.head<3>().setConstant(1.0 / 3.0);
      c.mixed(1, Vec6::Zero(), third, s.p, s.p);
      equal_radial_strains();
      break;
    }
    case StageType::unload_reload: {
      const double q_from = phase == 0 ? s.q : stage.target_deviator;
      const double q_to = phase == 0 ? stage.target_deviator : s.q;
      Vec6 qrow = Vec6::Zero();
      qrow << 1.0, -0.5, -0.5, 0.0, 0.0, 0.0;
      if (stage.drainage == Drainage::drained) {
        c.effective_stress(0, radial0 + q_from, radial0 + q_to);
        drained_radial(radial0, radial0);
      } else if (incompressible_) {
        c.mixed(0, Vec6::Zero(), qrow, q_from, q_to);
        c.mixed(1, m, Vec6::Zero(), 0.0, 0.0);
        equal_radial_strains();
      } else {
        // Total axial stress = cell radial + q, total radial stress = cell.
        c.mixed(0, kf * m, Vec6::Unit(0), cell_radial + q_from, cell_radial + q_to, true);
        undrained_radial();
      }
      break;
    }
  }
  c.finish();
}

bool Runner::substep(const Control& c, const Vec6& cs_start, double s0, double s1, const Vec6& d_acc, Vec6& d,
                     MaterialState& out, Mat6& tangent, bool elastic_predictor) {
  // Targets move linearly over the step: b(s) = C sigma_step_start + s (b - C sigma_step_start).
  const double ds = s1 - s0;
  d = (ds * c.b).cwiseProduct(c.pure_mask);
  if (c.nfree == 0) {
    ++result_.model_calls;
    return model_.integrate(*state_, d, out, tangent).status == Status::ok;
  }
  switch (c.nfree) {
    case 1: return newton<1>(c, cs_start, s0, s1, d_acc, d, out, tangent, elastic_predictor);
    case 2: return newton<2>(c, cs_start, s0, s1, d_acc, d, out, tangent, elastic_predictor);
    case 3: return newton<3>(c, cs_start, s0, s1, d_acc, d, out, tangent, elastic_predictor);
    default: return newton<0>(c, cs_start, s0, s1, d_acc, d, out, tangent, elastic_predictor);
  }
}

// Newton on the K free rows (K = 0: c.nfree, not known at compile time; a template argument so
// that the loops over the rows unroll). d holds the pure rows' increments on entry.
template <int K>
bool Runner::newton(const Control& c, const Vec6& cs_start, double s0, double s1, const Vec6& d_acc, Vec6& d,
                    MaterialState& out, Mat6& tangent, bool elastic_predictor) {
  const int k = K > 0 ? K : c.nfree;
  double jac[6][6];
  double r[6];
  double tol[6];
  double target[6];
  const double scale = std::max(1.0, state_->stress.cwiseAbs().maxCoeff());
  for (int ii = 0; ii < k; ++ii) {
    const int i = c.free[ii];
    target[ii] = cs_start[i] + s1 * (c.b[i] - cs_start[i]);
    tol[ii] = opt_.newton_tolerance * c.c_rows[ii].abs_sum * scale + 1e-12 * c.a_rows[ii].abs_sum;
  }
  // Predictor with the last converged tangent, linearised about the substep start. Where that
  // tangent is singular for this control (a perfectly plastic state under stress control) or a
  // previous try failed, the tangent of a zero increment (elastic for every model here) is used.
  const Mat6* dmat = tangent_;
  if (elastic_predictor) {
    ++result_.model_calls;
    if (model_.integrate(*state_, Vec6::Zero(), out, restart_tangent_).status != Status::ok) return false;
    dmat = &restart_tangent_;
  }
  bool have_stress = false;
  for (int iter = 0; iter <= opt_.max_newton_iterations; ++iter) {
    // Residuals of the free rows: a_i . (d_acc + d) + c_i . sigma - target_i, with sigma the
    // predicted stress (state + D d) before the first model call, the model's after.
    bool converged = true;
    for (int ii = 0; ii < k; ++ii) {
      const Control::SparseRow& ar = c.a_rows[ii];
      const Control::SparseRow& cr = c.c_rows[ii];
      double v = -target[ii];
      for (int m = 0; m < ar.n; ++m) v += ar.value[m] * (d_acc[ar.index[m]] + d[ar.index[m]]);
      for (int m = 0; m < cr.n; ++m) {
        const int j = cr.index[m];
        const double sig = have_stress ? out.stress[j] : state_->stress[j] + dmat->row(j).dot(d);
        v += cr.value[m] * sig;
      }
      r[ii] = v;
      converged = converged && std::abs(v) <= tol[ii];
    }
    if (have_stress && converged) return true;
    if (iter == opt_.max_newton_iterations) break;
    for (int ii = 0; ii < k; ++ii) {
      const int i = c.free[ii];
      const Control::SparseRow& cr = c.c_rows[ii];
      for (int jj = 0; jj < k; ++jj) {
        const int j = c.free[jj];
        double v = c.a(i, j);
        for (int m = 0; m < cr.n; ++m) v += cr.value[m] * (*dmat)(cr.index[m], j);
        jac[ii][jj] = v;
      }
    }
    bool solved;
    if constexpr (K > 0)
      solved = solve_fixed<K>(jac, r);
    else
      solved = solve_small(jac, r, k);
    if (!solved) {
      if (have_stress || elastic_predictor) return false;
      return substep(c, cs_start, s0, s1, d_acc, d, out, tangent, true);
    }
    for (int ii = 0; ii < k; ++ii) d[c.free[ii]] -= r[ii];
    ++result_.newton_iterations;
    ++result_.model_calls;
    if (model_.integrate(*state_, d, out, tangent).status != Status::ok) return false;
    if (!out.stress.allFinite()) return false;
    have_stress = true;
    dmat = &tangent;
  }
  return false;
}

bool Runner::step(int stage, int n, const Control& c, Drainage drainage) {
  // C sigma at the step start, on the free rows (the only ones substep reads).
  Vec6 cs_start = Vec6::Zero();
  for (int ii = 0; ii < c.nfree; ++ii) {
    const Control::SparseRow& cr = c.c_rows[ii];
    double v = 0.0;
    for (int m = 0; m < cr.n; ++m) v += cr.value[m] * state_->stress[cr.index[m]];
    cs_start[c.free[ii]] = v;
  }
  const Vec6 strain_start = strain_;
  const double u_start = u_;
  Vec6 d_acc = Vec6::Zero();
  Vec6 d;
  double s0 = 0.0;
  double ds = 1.0;
  int cuts = 0;
  while (s0 < 1.0) {
    const double s1 = (1.0 - s0 - ds < 1e-12) ? 1.0 : s0 + ds;
    if (substep(c, cs_start, s0, s1, d_acc, d, *spare_state_, *spare_tangent_, cuts > 0)) {
      std::swap(state_, spare_state_);
      std::swap(tangent_, spare_tangent_);
      d_acc += d;
      strain_ = strain_start + d_acc;
      s0 = s1;
    } else {
      ++cuts;
      ++result_.total_cuts;
      ds *= 0.5;
      if (cuts > opt_.max_cuts || result_.total_cuts > opt_.max_total_cuts) {
        strain_ = strain_start + d_acc;
        fail(stage, n, "the increment could not be completed after " + std::to_string(cuts - 1) +
                           " cuts (substep " + format_number(ds * 2.0) + " of the increment at fraction " +
                           format_number(s0) + ")");
        return false;
      }
    }
  }
  if (drainage == Drainage::drained) {
    u_ = protocol_.back_pressure;
  } else if (incompressible_) {
    u_ = 0.5 * (start_.cell[1] + start_.cell[2]) - 0.5 * (state_->stress[1] + state_->stress[2]);
  } else {
    u_ = u_start + protocol_.pore_fluid_stiffness * volumetric_strain(d_acc);
  }
  record(stage, n, cuts);
  return true;
}

bool Runner::run_stage(int index) {
  const Stage& stage = protocol_.stages[index];
  // A drained stage starts with the excess pore pressure dissipated.
  if (stage.drainage == Drainage::drained) u_ = protocol_.back_pressure;
  start_.stress = state_->stress;
  stage_strain_start_ = strain_;
  start_.u = u_;
  start_.cell = state_->stress;
  for (int i = 0; i < 3; ++i) start_.cell[i] += u_;
  const TriaxialInvariants t = triaxial_invariants(state_->stress);
  start_.p = t.p;
  start_.q = t.q;

  StageSummary summary;
  summary.stage = index;
  summary.first = static_cast<int>(result_.steps.size());
  const double axial_start = strain_[0];
  const double sign = (stage.type == StageType::shear || stage.type == StageType::constant_p_shear) && stage.axial_strain < 0 ? -1.0 : 1.0;
  const int phases = stage.type == StageType::unload_reload ? 2 : 1;
  Control control;
  int counter = 0;
  double best_q = -std::numeric_limits<double>::infinity();
  double best_ratio = -std::numeric_limits<double>::infinity();
  bool stop = false;
  for (int phase = 0; phase < phases && !stop; ++phase) {
    build_control(stage, start_, phase, control);
    for (int n = 1; n <= stage.steps; ++n) {
      control.set_targets(static_cast<double>(n) / stage.steps, u_);
      ++counter;
      if (!step(index, counter, control, stage.drainage)) return false;
      const StepRecord& r = result_.steps.back();
      if (std::abs(r.q) > std::abs(summary.peak_q)) summary.peak_q = r.q;
      const double q_dir = sign * r.q;
      const double ratio = sign > 0 ? r.stress_ratio : 1.0 / r.stress_ratio;
      switch (stage.stop) {
        case StopCriterion::none: break;
        case StopCriterion::peak_deviator:
          stop = n > 1 && q_dir <= best_q + 1e-9 * std::max(1.0, std::abs(best_q));
          break;
        case StopCriterion::peak_stress_ratio:
          stop = n > 1 && ratio <= best_ratio + 1e-12 * std::max(1.0, std::abs(best_ratio));
          break;
        case StopCriterion::axial_strain:
          stop = std::abs(strain_[0] - axial_start) >= stage.stop_value * (1.0 - 1e-12);
          break;
      }
      best_q = std::max(best_q, q_dir);
      best_ratio = std::max(best_ratio, ratio);
      if (stop) {
        summary.stopped_early = n < stage.steps;
        break;
      }
    }
  }
  summary.last = static_cast<int>(result_.steps.size()) - 1;
  summary.end_q = result_.steps.back().q;
  result_.stages.push_back(summary);
  return true;
}

void Runner::run() {
  e0_ = protocol_.initial.void_ratio;
  incompressible_ = std::isinf(protocol_.pore_fluid_stiffness);
  u_ = protocol_.back_pressure;
  model_.initialise(protocol_.initial, *state_);
  {
    MaterialState probe;
    ++result_.model_calls;
    if (model_.integrate(*state_, Vec6::Zero(), probe, *tangent_).status != Status::ok) {
      result_.termination = Termination::failed;
      result_.message = "the model could not evaluate its tangent at the initial state";
      return;
    }
  }
  std::size_t total = 1;
  for (const Stage& s : protocol_.stages) total += static_cast<std::size_t>(s.steps) * (s.type == StageType::unload_reload ? 2 : 1);
  result_.steps.reserve(total);
  result_.stages.reserve(protocol_.stages.size());
  record(0, 0, 0);
  for (std::size_t i = 0; i < protocol_.stages.size(); ++i)
    if (!run_stage(static_cast<int>(i))) return;
  result_.termination = Termination::completed;
  result_.message.assign("all ").append(std::to_string(protocol_.stages.size())).append(" stages completed");
}

}  // namespace

double stage_fraction_at(const Stage& stage, double engineering_stage_strain) {
  return natural_strain(engineering_stage_strain) / natural_strain(stage.axial_strain);
}

SimulationResult simulate(const DriverOptions& options, const Model& model, const TestProtocol& protocol) {
  SimulationResult result;
  simulate(options, model, protocol, result);
  return result;
}

void simulate(const DriverOptions& options, const Model& model, const TestProtocol& protocol, SimulationResult& result,
              bool checked) {
  if (!checked) {
    options.validate();
    validate_protocol(protocol);
  }
  result.clear();
  Runner(options, model, protocol, result).run();
}

}  // namespace triaxcal
