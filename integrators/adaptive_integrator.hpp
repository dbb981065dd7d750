// The adaptive integrators (Gauss–Radau, Bulirsch–Stoer, RKF 7(8)) behind the common
// integrator interface, integrating the model in parent-relative coordinates so moons keep
// their digits; with MEGNO on, the variational equations ride along as n more 3-vectors.
#pragma once

#include "engine/force_variations.hpp"
#include "integrators/gauss_radau.hpp"
#include "integrators/integrator.hpp"
#include "integrators/megno_accumulator.hpp"
#include "integrators/odeint_steppers.hpp"

#include <memory>
#include <optional>
#include <string>

namespace moonwright {

class adaptive_integrator final : public integrator {
  public:
    enum class method { gauss_radau, bulirsch_stoer, rkf78 };
    /// Starts from the model's state (x_, v_, t_).
    adaptive_integrator(const nbody_system& sys, std::vector<extra_force> extra, method m,
                        const integrator_options& options);
    adaptive_integrator(const adaptive_integrator&) = delete;
    adaptive_integrator& operator=(const adaptive_integrator&) = delete;

    [[nodiscard]] std::string_view name() const noexcept override;
    [[nodiscard]] double time() const noexcept override { return t_; }
    [[nodiscard]] std::size_t steps() const noexcept override { return steps_; }
    void integrate(double t_end) override;
    void relative_state(std::vector<double>& q, std::vector<double>& v) override;
    /// Replaces the state; the tangent vector and MEGNO sums (if on) carry on.
    void set_relative_state(double t, const std::vector<double>& q,
                            const std::vector<double>& v) override;
    [[nodiscard]] const force_model& forces() const noexcept override { return *model_; }

    /// Integrates the variational equations delta q'' = (da/dq) delta q + (da/dv) delta v
    /// (force_variations) with the state, as one system of 2 n vectors under the same step
    /// control, from a deviation drawn from seed (parent-relative coordinates).
    bool enable_megno(std::uint64_t seed) override;
    [[nodiscard]] megno_reading megno() const override;
    [[nodiscard]] std::vector<double> save_checkpoint() const override;
    void load_checkpoint(const std::vector<double>& data) override;

  private:
    /// (Re)makes the stepper for the plain or the tangent-augmented system, first step dt.
    void build(bool tangent, double dt);
    void on_step(double t, double* q, double* v);
    [[nodiscard]] checkpoint_kind kind() const noexcept;

    method method_;
    integrator_options options_;
    std::shared_ptr<const force_model> model_;
    std::optional<gauss_radau> radau_;
    std::optional<odeint_integrator> odeint_;
    std::vector<double> q_, v_; ///< 3 n each, 6 n with the tangent vector behind the state
    double t_ = 0;
    std::size_t steps_ = 0;
    bool megno_on_ = false;
    megno_scales scales_;
    megno_accumulator megno_;
};

} // namespace moonwright
