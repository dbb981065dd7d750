// 15th-order Gauss–Radau integrator with adaptive steps (Everhart 1985) and compensated
// summation, for close encounters, captures and reference solutions.
#pragma once

#include "integrators/second_order_system.hpp"

#include <array>
#include <cstddef>
#include <functional>
#include <vector>

namespace moonwright {

struct gauss_radau_options {
    double epsilon = 1e-9;     ///< step-control accuracy parameter (dimensionless)
    double initial_step = 0.0; ///< first step [s]; 0 = estimate from the system
    double min_step = 0.0;     ///< smallest step [s] before giving up (numerical_error)
    /// false: no step control, every step is initial_step (or set_next_step) long; for
    /// convergence tests. initial_step must then be > 0 or set with set_next_step.
    bool adaptive = true;
};

/// Counters of the work done so far (for diagnostics and benchmarks).
struct gauss_radau_stats {
    std::size_t steps = 0;         ///< accepted steps
    std::size_t rejected = 0;      ///< steps rejected by the step control and retried
    std::size_t evaluations = 0;   ///< calls of system.acceleration
    std::size_t iterations = 0;    ///< predictor–corrector iterations over accepted steps
    std::size_t not_converged = 0; ///< steps whose iterations hit the cap before converging
};

class gauss_radau {
  public:
    /// Throws std::invalid_argument when system.n == 0 or system.acceleration is empty.
    gauss_radau(second_order_system system, gauss_radau_options options = {});
    /// Takes one adaptive step from t (q, v hold 3n doubles each); returns the step taken [s].
    /// Rejected attempts are retried inside; throws numerical_error on a non-finite state or
    /// when the step would fall below options.min_step.
    double step(double& t, std::vector<double>& q, std::vector<double>& v);
    /// Advances to exactly t_end (the last step is shortened); returns the number of steps.
    /// t_end < t integrates backwards.
    std::size_t integrate(double& t, std::vector<double>& q, std::vector<double>& v, double t_end);
    [[nodiscard]] double next_step() const noexcept;
    void set_next_step(double dt) noexcept;
    /// Forgets the predicted b values and the summation compensation, e.g. after the caller
    /// changed q or v by an event (also done automatically when q or v change between calls).
    void reset() noexcept;
    [[nodiscard]] const gauss_radau_stats& stats() const noexcept { return stats_; }

    /// Called by integrate() after every accepted step with the time [s] and the state (3 n
    /// each) as written; the observer may rescale components with scale_components.
    using step_observer = std::function<void(double t, double* q, double* v)>;
    void set_step_observer(step_observer observer) { observer_ = std::move(observer); }
    /// Multiplies components [first, first + count) of q and v by `factor` inside the
    /// integrator (predicted b, g, e, compensation, remembered state), for a linear subsystem
    /// such as a tangent vector; the caller scales its q and v alike. A power of two keeps
    /// everything exact.
    void scale_components(std::size_t first, std::size_t count, double factor) noexcept;
    /// Appends everything that the next step reads (step, predictions, compensation, counters).
    void save_state(std::vector<double>& out) const;
    /// Restores save_state's values from data[pos ...), advancing pos; returns false when the
    /// data do not fit (sizes).
    bool load_state(const std::vector<double>& data, std::size_t& pos);
    /// Number of doubles save_state appends for m = 3 n components.
    [[nodiscard]] static std::size_t saved_size(std::size_t m) noexcept;
    [[nodiscard]] const gauss_radau_options& options() const noexcept { return options_; }

    /// The Gauss–Radau spacings h_1..h_7 on [0, 1] (h_0 = 0), Everhart (1985), Table.
    static const std::array<double, 8>& spacings() noexcept;

  private:
    /// One attempt of a step of length dt from (t, q0_, v0_); fills b_ and the candidate state.
    /// Returns the step-control error measure.
    double attempt(double t, double dt);
    void predict_b(double ratio) noexcept;
    /// Zeroes the predicted b (and g, e, bd): the next step's corrector starts from F0 alone.
    void forget_predictions() noexcept;
    /// Evaluates the force at the candidate end state (kept for the next step) and returns
    /// its largest difference from the expansion at h = 1, relative to the largest force.
    double end_mismatch(double t_end);
    void check_finite(const double* x, std::size_t count, const char* what, double t) const;

    second_order_system system_;
    step_observer observer_;
    gauss_radau_options options_;
    gauss_radau_stats stats_;
    std::size_t m_ = 0; ///< 3 n
    double dt_next_ = 0.0;
    bool have_b_ = false;     ///< b_ holds a prediction from the previous step
    bool have_state_ = false; ///< last_q_/last_v_ hold what the last step wrote
    /// The last rejected attempt not yet passed: error measure (0: none), length [s] and end
    /// time [s]. A later attempt starting inside it whose error measure did not fall like a
    /// smooth force's marks a jump in the force (see step()).
    double kink_err_ = 0.0;
    double kink_dt_ = 0.0;
    double kink_t_end_ = 0.0;
    bool have_a_end_ = false; ///< a_end_ holds the force at (t_a_end_, the state last written)
    double t_a_end_ = 0.0;
    double amax_ = 0.0; ///< largest |acceleration| seen in the last attempt (nodes and end)

    // All work arrays have 3 n entries (b, g, e, bd: 7 x 3n, stored k-major) and are allocated
    // once in the constructor so that stepping does not allocate.
    std::vector<double> q0_, v0_, a0_;    ///< state and acceleration at the step start
    std::vector<double> a_end_;           ///< acceleration at the candidate end state
    std::vector<double> cq_, cv_;         ///< Kahan compensation of q and v
    std::vector<double> qp_, vp_, ap_;    ///< predicted state and acceleration at a node
    std::vector<double> b_, g_, e_, bd_;  ///< expansion coefficients (see gauss_radau.cpp)
    std::vector<double> b_save_;          ///< b at the start of an attempt (for retries)
    std::vector<double> q1_, v1_;         ///< candidate end-of-step state
    std::vector<double> cq1_, cv1_;       ///< candidate compensation
    std::vector<double> last_q_, last_v_; ///< state as last written, to detect outside edits
};

} // namespace moonwright
