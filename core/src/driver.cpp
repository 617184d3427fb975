#include "triaxcal/driver.hpp"

#include <algorithm>
#include <cmath>
#include <sstream>

#include "key_path.hpp"
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
  if (!(tolerance >= 1e-10 && tolerance <= 0.1)) fail("tolerance", tolerance, "must be in [1e-10, 0.1]");
  if (max_substeps < 1) fail("max_substeps", static_cast<double>(max_substeps), "must be at least 1");
}

template <class T>
void BasicSimulationResult<T>::clear() {
  std::string kept_message = std::move(message);
  std::vector<BasicStepRecord<T>> kept_steps = std::move(steps);
  std::vector<StageSummary> kept_stages = std::move(stages);
  *this = BasicSimulationResult{};
  kept_message.clear();
  kept_steps.clear();
  kept_stages.clear();
  message = std::move(kept_message);
  steps = std::move(kept_steps);
  stages = std::move(kept_stages);
}

template <class T>
std::string BasicSimulationResult<T>::brief() const {
  std::ostringstream out;
  if (termination == Termination::completed) {
    out << "completed: " << (steps.empty() ? 0 : steps.size() - 1) << " steps in " << stages.size()
        << " stages, " << total_cuts << " increment cuts, " << model_calls << " model calls";
  } else {
    out << "failed: " << message;
  }
  return out.str();
}

template struct BasicSimulationResult<double>;
template struct BasicSimulationResult<Dual>;

namespace {

bool given(double v) { return !std::isnan(v); }

void require(bool ok, int stage, const std::string& key, const std::string& what) {
  if (!ok) throw InputError(detail::KeyPath("stages")[static_cast<std::size_t>(stage)].str() + ": " + key + " " + what);
}

/// The records a run of `protocol` holds: the initial state and every record step.
std::size_t record_count(const TestProtocol& protocol) {
  std::size_t total = 1;
  for (const Stage& s : protocol.stages)
    total += (s.record_at.empty() ? static_cast<std::size_t>(std::max(s.steps, 0)) : s.record_at.size()) *
             (s.type == StageType::unload_reload ? 2 : 1);
  return total;
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
    require(s.steps >= 1 && s.steps <= kMaxRecords, i, "steps",
            "= " + std::to_string(s.steps) + " must be in [1, " + std::to_string(kMaxRecords) + "]");
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
    if (!s.record_at.empty()) {
      require(s.record_at.size() <= static_cast<std::size_t>(kMaxRecords), i, "record_at",
              "has " + std::to_string(s.record_at.size()) + " points, at most " + std::to_string(kMaxRecords) +
                  " are allowed");
      for (std::size_t j = 0; j < s.record_at.size(); ++j) {
        const double f = s.record_at[j];
        const std::string key = detail::KeyPath("record_at")[j];
        require(f > 0.0 && f <= 1.0, i, key, "= " + format_number(f) + " must be in (0, 1] (a fraction of the stage's path)");
        if (j > 0)
          require(f > s.record_at[j - 1], i, key, "= " + format_number(f) + " must be larger than record_at[" +
                                                      std::to_string(j - 1) + "] = " + format_number(s.record_at[j - 1]) +
                                                      " (strictly increasing)");
      }
      require(s.record_at.back() == 1.0, i, "record_at",
              "must end at 1 (the end of the stage), found " + format_number(s.record_at.back()));
    }
    const bool consolidation = s.type != StageType::shear && s.type != StageType::unload_reload;
    if (consolidation)
      require(s.drainage == Drainage::drained, i, "drainage", "must be drained for a " + to_string(s.type) + " stage");
  }
  const std::size_t records = record_count(protocol);
  if (records > static_cast<std::size_t>(kMaxRecords))
    throw InputError("stages: " + std::to_string(records) +
                     " records in all (the initial state, every stage's steps or record_at points, twice for an "
                     "unload_reload), more than the " + std::to_string(kMaxRecords) + " a simulation may hold");
}

namespace {

// One step under mixed control: row i reads a_i . d_eps + c_i . sigma_new = b_i, with d_eps the
// strain increment of the step. Rows with `pure[i]` prescribe d_eps_i = b_i; the others are solved
// by Newton on the strain components of the same index.
// T: double, or Dual for a simulation with derivatives (targets taken from the stage start carry
// the derivatives of that state).
template <class T>
struct ControlT {
  using V = Eigen::Matrix<T, 6, 1>;
  Mat6 a = Mat6::Zero();
  Mat6 c = Mat6::Zero();
  V b = V::Zero();
  std::array<bool, 6> pure{};
  std::array<int, 6> free{};
  int nfree = 0;
  // Targets move linearly over a stage: b_i = from_i + f (to_i - from_i) - (pore_i ? u : 0), with f
  // the fraction of the stage at the end of the step and u the pore pressure at its start. Pure
  // rows hold their increment of one equal step in from = to (total / steps) and the stage's total
  // natural strain in `total` (record steps of other widths: set_pure_increments).
  V from = V::Zero();
  V to = V::Zero();
  V total = V::Zero();
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
    total.setZero();
    pure.fill(true);
    pore.fill(false);
  }
  // Row i prescribes the natural strain `stage_total` over the stage (`steps` equal steps).
  void strain(int i, double stage_total, int steps) {
    a.row(i).setZero();
    c.row(i).setZero();
    a(i, i) = 1.0;
    from[i] = to[i] = T(stage_total / steps);
    total[i] = T(stage_total);
    pure[i] = true;
  }
  void mixed(int i, const Vec6& arow, const Vec6& crow, const T& b_from, const T& b_to, bool minus_pore = false) {
    a.row(i) = arow.transpose();
    c.row(i) = crow.transpose();
    from[i] = b_from;
    to[i] = b_to;
    pure[i] = false;
    pore[i] = minus_pore;
    total[i] = T(0.0);
  }
  void effective_stress(int i, const T& b_from, const T& b_to) { mixed(i, Vec6::Zero(), Vec6::Unit(i), b_from, b_to); }
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
  void set_targets(double f, const T& u) { b = from + f * (to - from) - pore_mask.template cast<T>() * u; }
  // A record step of `width` (fraction of the stage): the pure rows' increments (after set_targets).
  void set_pure_increments(double width) {
    for (int i = 0; i < 6; ++i)
      if (pure[i]) b[i] = width * total[i];
  }
};

// Two unknowns (every drained triaxial stage): Cramer's rule with one division instead of three
// in a dependent chain, and the same singularity test as the elimination (first pivot the larger
// of the first column, second pivot det / first).
template <class R>
bool solve_two(double (&a)[6][6], R (&b)[6]) {
  const double largest = std::max(std::max(std::abs(a[0][0]), std::abs(a[0][1])),
                                  std::max(std::abs(a[1][0]), std::abs(a[1][1])));
  if (!(largest > 0.0) || !std::isfinite(largest)) return false;
  const double tiny = 1e-13 * largest;
  const double first = std::max(std::abs(a[0][0]), std::abs(a[1][0]));
  const double det = a[0][0] * a[1][1] - a[0][1] * a[1][0];
  if (!(first > tiny) || !(std::abs(det) > tiny * first)) return false;
  const double inv = 1.0 / det;
  const R x0 = (b[0] * a[1][1] - a[0][1] * b[1]) * inv;
  const R x1 = (a[0][0] * b[1] - b[0] * a[1][0]) * inv;
  b[0] = x0;
  b[1] = x1;
  return true;
}

// Gaussian elimination with partial pivoting on the K x K leading block (K <= 6), solving in place
// into b. Written out because the systems are 1 to 3 unknowns in the hot loop, where Eigen's
// dynamic-size LU cost a third of a drained increment; K is a template argument so that the loops
// unroll (solve_small dispatches). Returns false when a pivot falls below 1e-13 of the largest
// entry (singular for this control).
template <int K, class R>
bool solve_fixed(double (&a)[6][6], R (&b)[6]) {
  if constexpr (K == 2) {
    return solve_two(a, b);
  } else {
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
    R sum = b[i];
    for (int j = i + 1; j < K; ++j) sum -= a[i][j] * b[j];
    b[i] = sum / a[i][i];
  }
  return true;
  }
}

template <class R>
bool solve_small(double (&a)[6][6], R (&b)[6], int k) {
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

// Scalar of a state for the driver (no derivatives of the decisions: those are taken on values).
template <class V>
double max_abs(const V& v) {
  double m = 0.0;
  for (int i = 0; i < v.size(); ++i) m = std::max(m, std::abs(value_of(v[i])));
  return m;
}

template <class T> struct ScalarTypes;
template <> struct ScalarTypes<double> {
  using State = MaterialState;
  using ModelType = Model;
};
template <> struct ScalarTypes<Dual> {
  using State = DualState;
  using ModelType = DualModel;
};

template <class T>
struct Invariants {
  T axial, radial, p, q;
};
template <class T>
Invariants<T> invariants_of(const Eigen::Matrix<T, 6, 1>& s) {
  const T radial = 0.5 * (s[1] + s[2]);
  return {s[0], radial, (s[0] + 2.0 * radial) / 3.0, s[0] - radial};
}
template <class T>
T volumetric(const Eigen::Matrix<T, 6, 1>& e) {
  return e[0] + e[1] + e[2];
}
template <class T>
T engineering(const T& natural) {
  using std::expm1;
  return -expm1(-natural);
}

// C sigma of the free rows at `state` (the only rows substep reads from cs_start).
template <class T, class S>
Eigen::Matrix<T, 6, 1> free_row_stress(const ControlT<T>& c, const S& state) {
  Eigen::Matrix<T, 6, 1> cs = Eigen::Matrix<T, 6, 1>::Zero();
  for (int ii = 0; ii < c.nfree; ++ii) {
    const typename ControlT<T>::SparseRow& cr = c.c_rows[ii];
    T v(0.0);
    for (int m = 0; m < cr.n; ++m) v += cr.value[m] * state.stress[cr.index[m]];
    cs[c.free[ii]] = v;
  }
  return cs;
}

// The Newton matrix of the free rows: a_ij + c_i . D_:j over the free rows and columns.
template <class T>
void fill_jacobian(const ControlT<T>& c, const Mat6& dmat, int k, double (&jac)[6][6]) {
  for (int ii = 0; ii < k; ++ii) {
    const int i = c.free[ii];
    const typename ControlT<T>::SparseRow& cr = c.c_rows[ii];
    for (int jj = 0; jj < k; ++jj) {
      const int j = c.free[jj];
      double v = c.a(i, j);
      for (int m = 0; m < cr.n; ++m) v += cr.value[m] * dmat(cr.index[m], j);
      jac[ii][jj] = v;
    }
  }
}

// The driver on scalar T: double (values), or Dual (values with derivatives: the same substeps and
// decisions, taken on the values).
template <class T>
class Runner {
 public:
  using State = typename ScalarTypes<T>::State;
  using ModelType = typename ScalarTypes<T>::ModelType;
  using V6 = Eigen::Matrix<T, 6, 1>;
  using Control = ControlT<T>;
  using Record = BasicStepRecord<T>;
  using Result = BasicSimulationResult<T>;
  static constexpr bool kDual = !std::is_same_v<T, double>;

  Runner(const DriverOptions& options, const ModelType& model, const TestProtocol& protocol, Result& result,
         SubstepPlan* record, const SubstepPlan* replay)
      : opt_(options), model_(model), protocol_(protocol), result_(result), record_(record), replay_(replay) {}
  Runner(const Runner&) = delete;  // holds pointers into itself
  Runner& operator=(const Runner&) = delete;

  void run();

 private:
  // Stage constants, fixed at the start of a stage.
  struct StageStart {
    V6 stress;         // effective
    T u = T(0.0);      // absolute pore pressure
    V6 cell;           // total stress on the boundary (effective + u) at stage start
    T p = T(0.0);
    T q = T(0.0);
  };

  // What run_stage does after each record: peaks and stop criteria of the stage.
  struct RecordWatch {
    const Stage* stage = nullptr;
    StageSummary* summary = nullptr;
    double sign = 1.0;            // -1 for shear in extension
    double axial_start = 0.0;     // natural axial strain at the stage start
    double best_q = -std::numeric_limits<double>::infinity();
    double best_ratio = -std::numeric_limits<double>::infinity();
    // true: the stage stops at the record just written (n = its index within the loop half).
    bool stop_after(const Record& r, int n, double axial_now);
  };

  bool run_stage(int index);
  // Fixed stepping: each record step in one increment, halved only where the model fails.
  bool fixed_step(int stage, int step_in_stage, const Control& control, Drainage drainage);
  // Error-controlled substepping of one stage (or loop half) by step doubling, writing the records
  // on the way; `counter` = records of the stage written so far; `stopped` = a stop criterion fired.
  bool adaptive_phase(int stage, const Control& control, int per_phase, int& counter, RecordWatch& watch,
                      bool& stopped);
  double error_estimate(const Control& control, const State& one, const V6& d_one, const State& two,
                        const V6& d_two, const V6& stage_strain) const;
  // A record group: one substep over the next m records (2 <= m <= kMaxGroup) and the chain of m
  // substeps ending on each of them, compared (see adaptive_phase). Fills group_ on success.
  enum class GroupOutcome { accepted, rejected, model_failed };
  GroupOutcome group_step(const Control& control, const State& from, const Mat6& predictor,
                          const V6& cs_start, const double* ends, int m, const V6& d_acc, const V6& stage_offset,
                          double sum_sq, bool check_error, double& err_estimate, double& weight, int& smooth);
  // Pore pressure after the strain increment d (since the pore pressure was u0) reaching `state`.
  T pore_pressure(Drainage drainage, const State& state, const V6& d, const T& u0) const;
  // Integrates the fraction [s0, s1] of a record step (fixed stepping) or of a stage (error
  // control) from `from` (the state at s0, reached with the strain increment d_acc since the start
  // of that step or stage); `predictor` = the tangent at `from`.
  bool substep(const Control& control, const State& from, const Mat6& predictor, const V6& cs_start,
               double s0, double s1, const V6& d_acc, V6& d_eps, State& out, Mat6& tangent,
               bool elastic_predictor);
  template <int K>
  bool newton(const Control& control, const State& from, const Mat6& predictor, const V6& cs_start,
              double s0, double s1, const V6& d_acc, V6& d, State& out, Mat6& tangent,
              bool elastic_predictor);
  void record(int stage, int step, int cuts) { record(stage, step, cuts, *state_, strain_, u_); }
  void record(int stage, int step, int cuts, const State& state, const V6& strain, const T& u);
  void fail(int stage, int step, const std::string& why);
  void build_control(const Stage& stage, const StageStart& start, int phase, Control& control) const;

  const DriverOptions& opt_;
  const ModelType& model_;
  const TestProtocol& protocol_;
  Result& result_;
  SubstepPlan* record_ = nullptr;        // accepted substeps go here
  const SubstepPlan* replay_ = nullptr;  // or the substeps come from here
  std::size_t plan_cursor_ = 0;          // replay: the next entry of replay_->ends

  // The converged state and tangent and the spare pair a step writes into: swapped on success, not
  // copied (the pair is 400 bytes, a tenth of a drained Mohr-Coulomb increment). Step doubling
  // writes the one-substep result into `one_` and the half-way state of the two halves into `half_`;
  // the two-halves result goes into the spare pair.
  State states_[4];
  Mat6 tangents_[4] = {Mat6::Zero(), Mat6::Zero(), Mat6::Zero(), Mat6::Zero()};
  State* state_ = &states_[0];
  State* spare_state_ = &states_[1];
  State* one_state_ = &states_[2];
  State* half_state_ = &states_[3];
  Mat6* tangent_ = &tangents_[0];  // last converged tangent (predictor)
  Mat6* spare_tangent_ = &tangents_[1];
  Mat6* one_tangent_ = &tangents_[2];
  Mat6* half_tangent_ = &tangents_[3];
  // The chain of a record group: the state, tangent and strain since the group start at each record.
  static constexpr int kMaxGroup = 16;
  struct GroupPoint {
    State state;
    Mat6 tangent = Mat6::Zero();
    V6 d = V6::Zero();
  };
  GroupPoint group_[kMaxGroup];
  int record_steps_ = 0;        // record steps of the current stage (for messages)
  V6 strain_ = V6::Zero();  // total strain since the start of the protocol
  V6 stage_strain_start_ = V6::Zero();  // strain_ at the start of the current stage
  Mat6 restart_tangent_ = Mat6::Zero();  // tangent of a zero increment (fallback predictor)
  T u_ = T(0.0);              // absolute pore pressure
  double e0_ = kNotGiven;
  bool incompressible_ = true;
  StageStart start_;
};

template <class T>
void Runner<T>::record(int stage, int step_in_stage, int cuts, const State& state, const V6& strain, const T& u) {
  using std::exp;
  // Built in place from every member, in declaration order: an emplace_back() without arguments
  // would value-initialise the 160-byte record before it is filled.
  const T eps_v = volumetric(strain);
  const Invariants<T> t = invariants_of(state.stress);
  std::array<double, kMaxStateVariables> internal;
  for (std::size_t i = 0; i < internal.size(); ++i) internal[i] = value_of(state.internal[i]);
  result_.steps.emplace_back(stage, step_in_stage, strain[0], 0.5 * (strain[1] + strain[2]), eps_v,
                             engineering(T(strain[0] - stage_strain_start_[0])),
                             engineering(T(eps_v - volumetric(stage_strain_start_))), t.axial,
                             t.radial, t.p, t.q, u - protocol_.back_pressure,
                             given(e0_) ? T((1.0 + e0_) * exp(-eps_v) - 1.0) : T(kNotGiven),
                             value_of(t.radial) != 0.0 ? T(t.axial / t.radial) : T(kNotGiven), cuts, internal);
}

template <class T>
void Runner<T>::fail(int stage, int step_in_stage, const std::string& why) {
  std::ostringstream m;
  m << "stage " << stage << " (" << to_string(protocol_.stages[stage].type) << "), step " << step_in_stage
    << " of " << record_steps_ << ", axial strain " << format_number(value_of(strain_[0])) << ": " << why;
  result_.termination = Termination::failed;
  result_.message = m.str();
  result_.failed_stage = stage;
  result_.failed_step = step_in_stage;
}

// Control of a stage (phase 1: the reload half of a loop); targets run from the stage start
// (f = 0) to the stage end (f = 1), see Control::set_targets.
template <class T>
void Runner<T>::build_control(const Stage& stage, const StageStart& s, int phase, Control& c) const {
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
  const T cell_radial = 0.5 * (s.cell[1] + s.cell[2]);
  auto equal_radial_strains = [&] { c.mixed(2, radial_split, Vec6::Zero(), T(0.0), T(0.0)); };
  auto drained_radial = [&](const T& from, const T& to) {
    c.mixed(1, Vec6::Zero(), radial_mean, from, to);
    equal_radial_strains();
  };
  // Undrained boundary with constant total radial stress: s_r' + u = cell, with
  // u = u_step_start + K_f/n * d_eps_v for a compressible pore fluid.
  auto undrained_radial = [&] {
    c.mixed(1, kf * m, radial_mean, cell_radial, cell_radial, true);
    equal_radial_strains();
  };
  const T radial0 = 0.5 * (s.stress[1] + s.stress[2]);
  switch (stage.type) {
    case StageType::isotropic_consolidation:
      c.effective_stress(0, s.stress[0], T(stage.target_p));
      drained_radial(radial0, T(stage.target_p));
      break;
    case StageType::anisotropic_consolidation:
      c.effective_stress(0, s.stress[0], T(stage.target_axial));
      drained_radial(radial0, T(stage.target_radial));
      break;
    case StageType::k0_consolidation:
    case StageType::oedometer:
      if (given(stage.target_axial))
        c.effective_stress(0, s.stress[0], T(stage.target_axial));
      else
        c.strain(0, natural_strain(stage.axial_strain), stage.steps);
      break;
    case StageType::shear: {
      const double axial = natural_strain(stage.axial_strain);
      c.strain(0, axial, stage.steps);
      if (stage.drainage == Drainage::drained) {
        drained_radial(radial0, radial0);
      } else if (incompressible_) {
        // No volume change and equal radial strains: fully strain-controlled, no iteration.
        c.strain(1, -0.5 * axial, stage.steps);
        c.strain(2, -0.5 * axial, stage.steps);
      } else {
        undrained_radial();
      }
      break;
    }
    case StageType::constant_p_shear: {
      c.strain(0, natural_strain(stage.axial_strain), stage.steps);
      Vec6 third = Vec6::Zero();
      third.head<3>().setConstant(1.0 / 3.0);
      c.mixed(1, Vec6::Zero(), third, s.p, s.p);
      equal_radial_strains();
      break;
    }
    case StageType::unload_reload: {
      const T q_from = phase == 0 ? s.q : T(stage.target_deviator);
      const T q_to = phase == 0 ? T(stage.target_deviator) : s.q;
      Vec6 qrow = Vec6::Zero();
      qrow << 1.0, -0.5, -0.5, 0.0, 0.0, 0.0;
      if (stage.drainage == Drainage::drained) {
        c.effective_stress(0, radial0 + q_from, radial0 + q_to);
        drained_radial(radial0, radial0);
      } else if (incompressible_) {
        c.mixed(0, Vec6::Zero(), qrow, q_from, q_to);
        c.mixed(1, m, Vec6::Zero(), T(0.0), T(0.0));
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

template <class T>
bool Runner<T>::substep(const Control& c, const State& from, const Mat6& predictor, const V6& cs_start,
                     double s0, double s1, const V6& d_acc, V6& d, State& out, Mat6& tangent,
                     bool elastic_predictor) {
  // Targets move linearly over the step: b(s) = C sigma_step_start + s (b - C sigma_step_start).
  const double ds = s1 - s0;
  d = (ds * c.b).cwiseProduct(c.pure_mask.template cast<T>());
  if (c.nfree == 0) {
    ++result_.model_calls;
    return model_.integrate(from, d, out, tangent).status == Status::ok;
  }
  switch (c.nfree) {
    case 1: return newton<1>(c, from, predictor, cs_start, s0, s1, d_acc, d, out, tangent, elastic_predictor);
    case 2: return newton<2>(c, from, predictor, cs_start, s0, s1, d_acc, d, out, tangent, elastic_predictor);
    case 3: return newton<3>(c, from, predictor, cs_start, s0, s1, d_acc, d, out, tangent, elastic_predictor);
    default: return newton<0>(c, from, predictor, cs_start, s0, s1, d_acc, d, out, tangent, elastic_predictor);
  }
}

// Newton on the K free rows (K = 0: c.nfree, not known at compile time; a template argument so
// that the loops over the rows unroll). d holds the pure rows' increments on entry.
template <class T>
template <int K>
bool Runner<T>::newton(const Control& c, const State& from, const Mat6& predictor, const V6& cs_start,
                    double s0, double s1, const V6& d_acc, V6& d, State& out, Mat6& tangent,
                    bool elastic_predictor) {
  const int k = K > 0 ? K : c.nfree;
  double jac[6][6];
  T r[6];
  double tol[6];
  T target[6];
  const double scale = std::max(1.0, max_abs(from.stress));
  for (int ii = 0; ii < k; ++ii) {
    const int i = c.free[ii];
    target[ii] = cs_start[i] + s1 * (c.b[i] - cs_start[i]);
    tol[ii] = opt_.newton_tolerance * c.c_rows[ii].abs_sum * scale + 1e-12 * c.a_rows[ii].abs_sum;
  }
  // Predictor with the last converged tangent, linearised about the substep start. Where that
  // tangent is singular for this control (a perfectly plastic state under stress control) or a
  // previous try failed, the tangent of a zero increment (elastic for every model here) is used.
  const Mat6* dmat = &predictor;
  if (elastic_predictor) {
    ++result_.model_calls;
    if (model_.integrate(from, V6::Zero(), out, restart_tangent_).status != Status::ok) return false;
    dmat = &restart_tangent_;
  }
  bool have_stress = false;
  for (int iter = 0; iter <= opt_.max_newton_iterations; ++iter) {
    // Residuals of the free rows: a_i . (d_acc + d) + c_i . sigma - target_i, with sigma the
    // predicted stress (state + D d) before the first model call, the model's after.
    bool converged = true;
    for (int ii = 0; ii < k; ++ii) {
      const typename Control::SparseRow& ar = c.a_rows[ii];
      const typename Control::SparseRow& cr = c.c_rows[ii];
      T v = -target[ii];
      for (int m = 0; m < ar.n; ++m) v += ar.value[m] * (d_acc[ar.index[m]] + d[ar.index[m]]);
      for (int m = 0; m < cr.n; ++m) {
        const int j = cr.index[m];
        const T sig = have_stress ? out.stress[j] : T(from.stress[j] + dmat->row(j).template cast<T>().dot(d));
        v += cr.value[m] * sig;
      }
      r[ii] = v;
      converged = converged && std::abs(value_of(v)) <= tol[ii];
    }
    if (have_stress && converged) {
      if constexpr (kDual) {
        // The derivatives of the converged strain components by the implicit function theorem: one
        // more Newton correction with the tangent at the converged point, on the derivatives only
        // (the values stay those of the double run), then the model once more at the same values.
        // The residual's derivatives r' = J d' + dr/d(inputs), so d' - J^-1 r' = -J^-1 dr/d(inputs)
        // exactly, whatever derivatives the iterations left in d.
        fill_jacobian(c, tangent, k, jac);
        bool solved;
        if constexpr (K > 0)
          solved = solve_fixed<K>(jac, r);
        else
          solved = solve_small(jac, r, k);
        if (!solved) return false;
        for (int ii = 0; ii < k; ++ii) d[c.free[ii]].v -= r[ii].v;
        ++result_.model_calls;
        if (model_.integrate(from, d, out, tangent).status != Status::ok) return false;
      }
      return true;
    }
    if (iter == opt_.max_newton_iterations) break;
    fill_jacobian(c, *dmat, k, jac);
    bool solved;
    if constexpr (K > 0)
      solved = solve_fixed<K>(jac, r);
    else
      solved = solve_small(jac, r, k);
    if (!solved) {
      if (have_stress || elastic_predictor) return false;
      return substep(c, from, predictor, cs_start, s0, s1, d_acc, d, out, tangent, true);
    }
    for (int ii = 0; ii < k; ++ii) d[c.free[ii]] -= r[ii];
    ++result_.newton_iterations;
    ++result_.model_calls;
    if (model_.integrate(from, d, out, tangent).status != Status::ok) return false;
    if (!out.stress.allFinite()) return false;
    have_stress = true;
    dmat = &tangent;
  }
  return false;
}

template <class T>
T Runner<T>::pore_pressure(Drainage drainage, const State& state, const V6& d, const T& u0) const {
  if (drainage == Drainage::drained) return T(protocol_.back_pressure);
  if (incompressible_) return 0.5 * (start_.cell[1] + start_.cell[2]) - 0.5 * (state.stress[1] + state.stress[2]);
  return u0 + protocol_.pore_fluid_stiffness * volumetric(d);
}

template <class T>
bool Runner<T>::fixed_step(int stage, int n, const Control& c, Drainage drainage) {
  const V6 cs_start = free_row_stress(c, *state_);
  const V6 strain_start = strain_;
  const T u_start = u_;
  V6 d_acc = V6::Zero();
  V6 d;
  double s0 = 0.0;
  double ds = 1.0;
  int cuts = 0;
  while (s0 < 1.0) {
    const double s1 = (1.0 - s0 - ds < 1e-12) ? 1.0 : s0 + ds;
    if (substep(c, *state_, *tangent_, cs_start, s0, s1, d_acc, d, *spare_state_, *spare_tangent_, cuts > 0)) {
      std::swap(state_, spare_state_);
      std::swap(tangent_, spare_tangent_);
      d_acc += d;
      strain_ = strain_start + d_acc;
      s0 = s1;
      ++result_.substeps;
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
  u_ = pore_pressure(drainage, *state_, d_acc, u_start);
  record(stage, n, cuts);
  return true;
}

// Floors of the error norm: stresses relative to max(|sigma'|, 1 kPa), the strains of the
// stress-controlled rows relative to max(|strain since the stage start|, 1e-3) (common practice
// for relative error norms with an absolute floor near zero, no source; 1e-3 is a tenth of a typical
// drained volume change, so near the stage start a strain error counts as much as late in the stage).
constexpr double kStressScaleFloor = 1.0;
constexpr double kStrainScaleFloor = 1e-3;
// Smallest substep, as a fraction of the stage's path: below it a substep whose error estimate is
// still above the tolerance ends the run (a jump in the model's response, not a smooth path).
constexpr double kMinSubstep = 1e-9;
// A substep end that falls within this fraction of the substep of a record point is moved onto it:
// no sliver of a substep before or after a record.
constexpr double kSnapToRecord = 0.1;
// Largest share sum a_i^2 / H^2 of a record group (see adaptive_phase): 0.5 for two equal substeps;
// at 0.6 the weight of the difference is 1.5.
constexpr double kMaxGroupShare = 0.6;
// A group is taken only where the proposed substep is this many times the pair span of the same
// error: the chain's records, which are not extrapolated, then err about kGroupMargin^2 times less
// than the tolerance, like the extrapolated ends of pairs. Without the margin the records of a
// smooth hardening curve would alternate between first-order chain states and second-order pair ends
// as the parameters move, and the fit's objective would carry that noise (the hyperbolic fit
// benchmark took 4x the evaluations).
constexpr double kGroupMargin = 10.0;
constexpr double kInfinity = std::numeric_limits<double>::infinity();

// Local extrapolation of a step-doubling pair into `two` (Hairer, Norsett & Wanner 1993, sec. II.4):
// x = 2 x_halves - x_one cancels the C h^2 term of the local error, a second-order result. For a
// record group (Runner::group_step) the fine path is a chain of unequal substeps a_i over the span H,
// the errors C H^2 and C sum a_i^2, so x = x_chain + w (x_chain - x_one) with
// w = sum a_i^2 / (H^2 - sum a_i^2) (Richardson extrapolation with an arbitrary step ratio; w = 1 for
// two halves). An internal variable is extrapolated only where both results changed it alike (same
// sign, increments within a factor 1.5 of each other); otherwise (a variable that changed in one of
// them only, e.g. a set of active surfaces, a warm start of a local solve, the onset of yield inside
// the substep) it keeps its value of the fine path, so that no hardening variable runs backwards and
// no flag takes a value between its states. The stress then differs from a state consistent with
// those variables by at most w |sigma_one - sigma_fine|, which the error control keeps below the
// tolerance, and the next increment's return removes it.
template <class S>
void extrapolate(const S& start, const S& one, S& two, double w = 1.0) {
  two.stress += w * (two.stress - one.stress);
  for (int i = 0; i < kMaxStateVariables; ++i) {
    const double d_one = value_of(one.internal[i] - start.internal[i]);
    const double d_two = value_of(two.internal[i] - start.internal[i]);
    if (d_one == d_two || !(d_one * d_two > 0.0)) continue;
    const double r = d_one / d_two;
    if (r >= 0.5 && r <= 1.5) two.internal[i] += w * (two.internal[i] - one.internal[i]);
  }
}

template <class T>
double Runner<T>::error_estimate(const Control& c, const State& one, const V6& d_one, const State& two,
                              const V6& d_two, const V6& stage_strain) const {
  const double stress_scale = std::max(kStressScaleFloor, max_abs(two.stress));
  double err = max_abs(V6(one.stress - two.stress)) / stress_scale;
  if (c.nfree > 0) {
    const double strain_scale = std::max(kStrainScaleFloor, max_abs(stage_strain));
    for (int ii = 0; ii < c.nfree; ++ii) {
      const int i = c.free[ii];
      err = std::max(err, std::abs(value_of(d_one[i] - d_two[i])) / strain_scale);
    }
  }
  return err;
}

template <class T>
typename Runner<T>::GroupOutcome Runner<T>::group_step(const Control& c, const State& from, const Mat6& predictor,
                                        const V6& cs_start, const double* ends, int m, const V6& d_acc,
                                        const V6& stage_offset, double sum_sq, bool check_error,
                                        double& err_estimate, double& weight, int& smooth) {
  const State* at = &from;
  const Mat6* tangent = &predictor;
  V6 sum = V6::Zero();
  V6 d;
  double linear_gap = 0.0;
  smooth = m;
  for (int j = 0; j < m; ++j) {
    GroupPoint& g = group_[j];
    if (!substep(c, *at, *tangent, cs_start, ends[j], ends[j + 1], d_acc + sum, d, g.state, g.tangent, false))
      return GroupOutcome::model_failed;
    // The substep against its linear prediction from the tangent at its start (what the Newton
    // predictor assumed): the difference of a backward and a forward Euler step, about twice the
    // backward step's local error where the tangent is the continuum one, and large where the
    // response turns within the substep (yield onset) however the one substep over the group
    // happens to end. Not an estimate on its own: the consistent tangent of the previous backward
    // Euler substep already contains most of the curvature term, so on smooth hardening the gap can
    // be small while the error is not; the comparison with one substep below covers that.
    const double scale = std::max(kStressScaleFloor, max_abs(g.state.stress));
    linear_gap += max_abs(V6(g.state.stress - at->stress - tangent->template cast<T>() * d)) / scale;
    if (check_error && 0.5 * linear_gap > opt_.tolerance) {
      smooth = j;  // substeps before j were smooth
      err_estimate = 0.5 * linear_gap;
      return GroupOutcome::rejected;
    }
    sum += d;
    g.d = sum;
    at = &g.state;
    tangent = &g.tangent;
  }
  V6 d_one;
  if (!substep(c, from, predictor, cs_start, ends[0], ends[m], d_acc, d_one, *one_state_, *one_tangent_, false))
    return GroupOutcome::model_failed;
  const double span = ends[m] - ends[0];
  weight = sum_sq / (span * span - sum_sq);
  GroupPoint& end = group_[m - 1];
  err_estimate = std::max(weight * error_estimate(c, *one_state_, d_one, end.state, sum, stage_offset + d_acc + sum),
                          0.5 * linear_gap);
  if (check_error && err_estimate > opt_.tolerance) return GroupOutcome::rejected;
  if (opt_.extrapolate) {
    extrapolate(from, *one_state_, end.state, weight);
    end.d = sum + weight * (sum - d_one);
  }
  return GroupOutcome::accepted;
}

// Step doubling (Richardson extrapolation of the local error; Hairer, Norsett & Wanner 1993,
// "Solving Ordinary Differential Equations I", sec. II.4): from the same state, one substep of size
// h and two of h/2. The model's increment (backward Euler or an exact return) is first order, so
// the local errors are C h^2 and 2 C (h/2)^2 and their difference estimates the error of the two
// halves, which are kept. Substep control as in Sloan, Abbo & Sheng (2001), "Refined explicit
// integration of elastoplastic models with automatic error control", Engineering Computations
// 18(1/2), 121-154: accept when the relative error is below the tolerance, next size
// h (0.9 sqrt(tol / err)) within [0.2 h, 4 h] (exponent 1/2 for a first-order pair), no growth
// after a failed try until the next record.
//
// The path parameter s is the fraction of the stage (or loop half): the targets of the
// stress-controlled rows move linearly from their values at its start (cs_start) to the end
// (control.b), the strain rows by s times their total. Every record is a substep end, so that the
// error estimate covers each recorded state: a record reached inside a long substep by one
// increment from its start is not covered, and on paths whose end state forgets the path (MCC
// undrained from OCR 6 reaching the critical state) the estimate at the substep end stays small
// while such a record is 7 % of the pore-pressure range off (found by the coverage tests).
//
// Record groups: where records are closer than the substeps the tolerance allows (measured curves,
// a fitted Mohr-Coulomb curve whose return is nearly exact), a pair per record would cost three
// model calls a record. Instead the fine path of the pair is the chain of substeps ending on the next
// m records (2 <= m <= kMaxGroup), compared with one substep over them all: m + 1 calls for m records.
// For a first-order increment the one substep errs by C H^2 and the chain by C sum a_i^2 (a_i its
// substeps, H their sum), so the chain's error is w |x_one - x_chain| with
// w = sum a_i^2 / (H^2 - sum a_i^2) (Richardson's estimate with an arbitrary step ratio; w = 1 for
// two halves), and each record inside the chain errs by at most its share of C sum a_i^2. A group is
// taken when the last accepted substep's error allows a pair kGroupMargin times the pair of the same
// error as the chain (kGroupMargin sqrt(2 sum a_i^2) <= capacity) and its substeps are not dominated
// by one (sum a_i^2 <= kMaxGroupShare H^2, so that w stays near or below 1). The end state is
// extrapolated as above; the records inside are the chain's states. A turn of the response inside
// the chain (group_step's linearisation gap) cuts the group before it.
template <class T>
bool Runner<T>::adaptive_phase(int stage, const Control& c, int per_phase, int& counter, RecordWatch& watch, bool& stopped) {
  const Stage& st = protocol_.stages[static_cast<std::size_t>(stage)];
  const bool equal = st.record_at.empty();
  auto fraction = [&](int k) {
    return equal ? static_cast<double>(k) / st.steps : st.record_at[static_cast<std::size_t>(k - 1)];
  };
  const V6 cs_start = free_row_stress(c, *state_);
  const V6 phase_start = strain_;
  const V6 stage_offset = strain_ - stage_strain_start_;
  const T u_start = u_;
  V6 d_acc = V6::Zero();  // strain since the phase start
  V6 d_one, d_first, d_second, d_mid, d_record;
  double s0 = 0.0;
  double proposed = fraction(1);
  int next = 1;        // the next record to write (1-based within the phase)
  double turn_end = -1.0;  // a group found the response turning in a substep ending here: none across it
  // Pair span the last accepted substep's error allows, without the controller's growth limit
  // (infinite where it erred nothing, e.g. an exact return): what decides whether records are close
  // enough to group. 0 after a rejection or failure, until the next accepted substep.
  double capacity = 0.0;
  int cuts = 0;        // model-failure cuts of substeps within the current record step
  bool failed = false; // a substep failed since the last record: no growth
  const int first_counter = counter;
  const bool replay = replay_ != nullptr;
  // Accepted and rejected substeps (pairs and groups alike) are bounded by max_substeps.
  auto out_of_substeps = [&](int n) {
    if (result_.substeps + result_.rejected_substeps < opt_.max_substeps) return false;
    fail(stage, n, "the error control used all " + std::to_string(opt_.max_substeps) +
                       " substeps of max_substeps at tolerance " + format_number(opt_.tolerance));
    return true;
  };
  while (next <= per_phase) {
    const double limit = fraction(next);
    const double h = proposed;
    const double remaining = limit - s0;
    // A record group over the next m records, or (m = 0) a pair.
    int m = 0;
    double ends[kMaxGroup + 1];
    ends[0] = s0;
    if (replay) {
      const double v = plan_cursor_ < replay_->ends.size() ? replay_->ends[plan_cursor_] : -1.0;
      for (int j = 2; v > limit && j <= kMaxGroup && next + j - 1 <= per_phase; ++j)
        if (fraction(next + j - 1) == v) m = j;
      if (m > 0) ++plan_cursor_;
    } else if (!failed) {
      double sum_sq = 0.0;
      const double reach = capacity / kGroupMargin;
      for (int j = 1; j <= kMaxGroup && next + j - 1 <= per_phase; ++j) {
        if (s0 < turn_end && fraction(next + j - 1) >= turn_end) break;
        const double a = fraction(next + j - 1) - (j == 1 ? s0 : fraction(next + j - 2));
        sum_sq += a * a;
        if (2.0 * sum_sq > reach * reach) break;
        const double span = fraction(next + j - 1) - s0;
        if (j >= 2 && sum_sq <= kMaxGroupShare * span * span) m = j;
      }
    }
    if (m >= 2) {
      const int n = first_counter + next;
      if (out_of_substeps(n)) return false;
      double group_sq = 0.0;  // sum a_i^2 of the chain's substeps
      for (int j = 1; j <= m; ++j) {
        ends[j] = fraction(next + j - 1);
        group_sq += (ends[j] - ends[j - 1]) * (ends[j] - ends[j - 1]);
      }
      double err = 0.0;
      double weight = 1.0;
      int smooth = m;
      const GroupOutcome outcome =
          group_step(c, *state_, *tangent_, cs_start, ends, m, d_acc, stage_offset, group_sq, !replay, err, weight,
                     smooth);
      if (outcome == GroupOutcome::model_failed) {
        if (replay) {
          fail(stage, n, "the model failed on a replayed substep");
          return false;
        }
        proposed = limit - s0;  // a pair to the next record, with the usual cuts
        capacity = 0.0;
        continue;
      }
      const double pair_span = std::sqrt(2.0 * group_sq);  // the pair span of the same error
      const double factor = err > 0.0 ? std::clamp(0.9 * std::sqrt(opt_.tolerance / err), 0.2, 4.0) : 4.0;
      if (outcome == GroupOutcome::rejected) {
        ++result_.rejected_substeps;
        if (smooth < m) {
          // The response turned in substep `smooth`: a group of the records before it (or a pair
          // to the next record, whose own control then finds the turn); the capacity stands.
          turn_end = ends[smooth + 1];
          if (smooth < 2) proposed = limit - s0;
        } else {
          capacity = 0.0;
          proposed = std::min(factor, 0.9) * pair_span;
        }
        continue;
      }
      result_.substeps += m;
      if (record_ != nullptr) record_->ends.push_back(ends[m]);
      int last = m;
      for (int j = 1; j <= m; ++j) {
        const GroupPoint& g = group_[j - 1];
        d_record = d_acc + g.d;
        const V6 strain = phase_start + d_record;
        record(stage, ++counter, 0, g.state, strain, pore_pressure(st.drainage, g.state, d_record, u_start));
        ++next;
        if (watch.stop_after(result_.steps.back(), next - 1, value_of(strain[0]))) {
          stopped = true;
          last = j;
          break;
        }
      }
      const GroupPoint& g = group_[last - 1];
      *state_ = g.state;
      *tangent_ = g.tangent;
      d_acc += g.d;
      strain_ = phase_start + d_acc;
      u_ = pore_pressure(st.drainage, *state_, d_acc, u_start);
      s0 = ends[last];
      cuts = 0;
      failed = false;
      if (stopped) return true;
      proposed = factor * pair_span;
      capacity = err > 0.0 ? 0.9 * std::sqrt(opt_.tolerance / err) * pair_span : kInfinity;
      continue;
    }
    double s1;
    if (replay) {
      // The recorded substep: it must move forward and not cross the next record.
      s1 = plan_cursor_ < replay_->ends.size() ? replay_->ends[plan_cursor_++] : -1.0;
      if (!(s1 > s0 && s1 <= limit)) {
        fail(stage, first_counter + next, "the replayed substep plan does not fit this run (substep end " +
                                              format_number(s1) + " after " + format_number(s0) + ")");
        return false;
      }
    } else if (h >= remaining / (1.0 + kSnapToRecord)) {
      s1 = limit;
    } else if (h >= 0.5 * remaining) {
      s1 = s0 + 0.5 * remaining;  // two equal substeps to the end, no sliver
    } else {
      s1 = s0 + h;  // ends at least h before the record: no sliver to snap
    }
    const double sm = 0.5 * (s0 + s1);
    const double size = s1 - s0;
    const int n = first_counter + next;
    if (out_of_substeps(n)) return false;
    bool ok = substep(c, *state_, *tangent_, cs_start, s0, s1, d_acc, d_one, *one_state_, *one_tangent_, failed) &&
              substep(c, *state_, *tangent_, cs_start, s0, sm, d_acc, d_first, *half_state_, *half_tangent_, failed);
    if (ok) {
      d_mid = d_acc + d_first;
      ok = substep(c, *half_state_, *half_tangent_, cs_start, sm, s1, d_mid, d_second, *spare_state_, *spare_tangent_,
                   failed);
    }
    if (!ok && replay) {
      fail(stage, n, "the model failed on a replayed substep");
      return false;
    }
    if (!ok) {
      capacity = 0.0;
      // Cuts of a substep within one record step count against max_cuts; a substep across records
      // is halved freely down to the record spacing.
      if (s1 <= fraction(next)) ++cuts;
      ++result_.total_cuts;
      failed = true;
      proposed = 0.5 * size;
      if (cuts > opt_.max_cuts || result_.total_cuts > opt_.max_total_cuts || proposed < kMinSubstep) {
        const double from = next > 1 ? fraction(next - 1) : 0.0;
        const double width = fraction(next) - from;
        fail(stage, n, "the increment could not be completed after " + std::to_string(cuts - 1) + " cuts (substep " +
                           format_number(size / width) + " of the increment at fraction " +
                           format_number((s0 - from) / width) + ")");
        return false;
      }
      continue;
    }
    d_second += d_first;  // the two halves' increment
    const double err = error_estimate(c, *one_state_, d_one, *spare_state_, d_second, stage_offset + d_acc + d_second);
    double factor = err > 0.0 ? std::clamp(0.9 * std::sqrt(opt_.tolerance / err), 0.2, 4.0) : 4.0;
    if (failed) factor = std::min(factor, 1.0);
    if (err > opt_.tolerance && !replay) {
      ++result_.rejected_substeps;
      capacity = 0.0;
      proposed = factor * size;
      if (size <= kMinSubstep) {
        fail(stage, n, "the error estimate " + format_number(err) + " stays above the tolerance " +
                           format_number(opt_.tolerance) + " at the smallest substep (" + format_number(kMinSubstep) +
                           " of the stage)");
        return false;
      }
      continue;
    }
    ++result_.substeps;
    capacity = err > 0.0 ? 0.9 * std::sqrt(opt_.tolerance / err) * size : kInfinity;
    if (record_ != nullptr) record_->ends.push_back(s1);
    if (opt_.extrapolate) {
      extrapolate(*state_, *one_state_, *spare_state_);
      d_second = 2.0 * d_second - d_one;
    }
    // The record this substep ends on (substeps never cross a record).
    while (next <= per_phase && fraction(next) <= s1) {
      const State* rec = spare_state_;
      d_record = d_acc + d_second;
      const V6* d_rec = &d_record;
      const V6 strain = phase_start + *d_rec;
      record(stage, ++counter, cuts, *rec, strain, pore_pressure(st.drainage, *rec, *d_rec, u_start));
      ++next;
      cuts = 0;
      failed = false;
      if (watch.stop_after(result_.steps.back(), next - 1, value_of(strain[0]))) {
        stopped = true;
        break;
      }
    }
    std::swap(state_, spare_state_);
    std::swap(tangent_, spare_tangent_);
    d_acc += d_second;
    strain_ = phase_start + d_acc;
    u_ = pore_pressure(st.drainage, *state_, d_acc, u_start);
    s0 = s1;
    if (stopped) return true;
    // A substep shortened to end on a record or the stage end does not shrink a proposal it met.
    if (size < h && factor >= 1.0)
      proposed = std::max(proposed, factor * size);
    else
      proposed = factor * size;
  }
  return true;
}

template <class T>
bool Runner<T>::RecordWatch::stop_after(const Record& r, int n, double axial_now) {
  const double rq = value_of(r.q);
  const double stress_ratio = value_of(r.stress_ratio);
  if (std::abs(rq) > std::abs(summary->peak_q)) summary->peak_q = rq;
  const double q_dir = sign * rq;
  const double ratio = sign > 0 ? stress_ratio : 1.0 / stress_ratio;
  bool stop = false;
  switch (stage->stop) {
    case StopCriterion::none: break;
    case StopCriterion::peak_deviator:
      stop = n > 1 && q_dir <= best_q + 1e-9 * std::max(1.0, std::abs(best_q));
      break;
    case StopCriterion::peak_stress_ratio:
      stop = n > 1 && ratio <= best_ratio + 1e-12 * std::max(1.0, std::abs(best_ratio));
      break;
    case StopCriterion::axial_strain:
      stop = std::abs(engineering_strain(axial_now - axial_start)) >= stage->stop_value * (1.0 - 1e-12);
      break;
  }
  best_q = std::max(best_q, q_dir);
  best_ratio = std::max(best_ratio, ratio);
  return stop;
}

template <class T>
bool Runner<T>::run_stage(int index) {
  const Stage& stage = protocol_.stages[index];
  // A drained stage starts with the excess pore pressure dissipated.
  if (stage.drainage == Drainage::drained) u_ = T(protocol_.back_pressure);
  start_.stress = state_->stress;
  stage_strain_start_ = strain_;
  start_.u = u_;
  start_.cell = state_->stress;
  for (int i = 0; i < 3; ++i) start_.cell[i] += u_;
  const Invariants<T> t = invariants_of(state_->stress);
  start_.p = t.p;
  start_.q = t.q;

  StageSummary summary;
  summary.stage = index;
  summary.first = static_cast<int>(result_.steps.size());
  RecordWatch watch;
  watch.stage = &stage;
  watch.summary = &summary;
  watch.axial_start = value_of(strain_[0]);
  watch.sign = (stage.type == StageType::shear || stage.type == StageType::constant_p_shear) && stage.axial_strain < 0 ? -1.0 : 1.0;
  const int phases = stage.type == StageType::unload_reload ? 2 : 1;
  // Record steps: `steps` equal ones, or ending at the fractions of record_at (each half of a loop).
  const bool equal = stage.record_at.empty();
  const int per_phase = equal ? stage.steps : static_cast<int>(stage.record_at.size());
  record_steps_ = per_phase * phases;
  Control control;
  int counter = 0;
  bool stop = false;
  for (int phase = 0; phase < phases && !stop; ++phase) {
    build_control(stage, start_, phase, control);
    if (!opt_.fixed_steps) {
      // The whole loop half at once: targets at its end, pure rows their total.
      control.set_targets(1.0, u_);
      control.set_pure_increments(1.0);
      const int before = counter;
      if (!adaptive_phase(index, control, per_phase, counter, watch, stop)) return false;
      // Each stage (or loop half) of the plan ends with -1; a replay that stopped early skips the rest.
      if (record_ != nullptr) record_->ends.push_back(-1.0);
      if (replay_ != nullptr) {
        while (plan_cursor_ < replay_->ends.size() && replay_->ends[plan_cursor_] != -1.0) ++plan_cursor_;
        if (plan_cursor_ == replay_->ends.size()) {
          fail(index, counter, "the replayed substep plan ended before this stage");
          return false;
        }
        ++plan_cursor_;
      }
      if (stop) summary.stopped_early = counter - before < per_phase;
      continue;
    }
    double f_prev = 0.0;
    for (int n = 1; n <= per_phase; ++n) {
      const double f = equal ? static_cast<double>(n) / stage.steps : stage.record_at[static_cast<std::size_t>(n - 1)];
      control.set_targets(f, u_);
      if (!equal) control.set_pure_increments(f - f_prev);
      f_prev = f;
      ++counter;
      if (!fixed_step(index, counter, control, stage.drainage)) return false;
      stop = watch.stop_after(result_.steps.back(), n, value_of(strain_[0]));
      if (stop) {
        summary.stopped_early = n < per_phase;
        break;
      }
    }
  }
  summary.last = static_cast<int>(result_.steps.size()) - 1;
  summary.end_q = value_of(result_.steps.back().q);
  result_.stages.push_back(summary);
  return true;
}

template <class T>
void Runner<T>::run() {
  e0_ = protocol_.initial.void_ratio;
  incompressible_ = std::isinf(protocol_.pore_fluid_stiffness);
  u_ = T(protocol_.back_pressure);
  model_.initialise(protocol_.initial, *state_);
  {
    State probe;
    ++result_.model_calls;
    if (model_.integrate(*state_, V6::Zero(), probe, *tangent_).status != Status::ok) {
      result_.termination = Termination::failed;
      result_.message = "the model could not evaluate its tangent at the initial state";
      return;
    }
  }
  result_.steps.reserve(record_count(protocol_));
  result_.stages.reserve(protocol_.stages.size());
  record(0, 0, 0);
  for (std::size_t i = 0; i < protocol_.stages.size(); ++i)
    if (!run_stage(static_cast<int>(i))) return;
  result_.termination = Termination::completed;
  result_.message.assign("all ").append(std::to_string(protocol_.stages.size())).append(" stages completed");
}

}  // namespace

double stage_fraction_at(const Stage& stage, double engineering_stage_strain) {
  const bool strain_controlled = stage.type == StageType::shear || stage.type == StageType::constant_p_shear ||
                                 (stage.type == StageType::oedometer && !given(stage.target_axial));
  if (!strain_controlled || !given(stage.axial_strain)) return kNotGiven;
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
  Runner<double>(options, model, protocol, result, nullptr, nullptr).run();
}

void simulate(const DriverOptions& options, const Model& model, const TestProtocol& protocol, SimulationResult& result,
              bool checked, SubstepPlan* record, const SubstepPlan* replay) {
  if (!checked) {
    options.validate();
    validate_protocol(protocol);
  }
  result.clear();
  if (record != nullptr) record->ends.clear();
  Runner<double>(options, model, protocol, result, record, replay).run();
}

void simulate(const DriverOptions& options, const DualModel& model, const TestProtocol& protocol,
              DualSimulationResult& result, bool checked, const SubstepPlan* replay) {
  if (!checked) {
    options.validate();
    validate_protocol(protocol);
  }
  result.clear();
  Runner<Dual>(options, model, protocol, result, nullptr, replay).run();
}

}  // namespace triaxcal
