// The adaptive integrators (Gauss–Radau, Bulirsch–Stoer, RKF 7(8)) behind the common
// integrator interface, integrating the model in parent-relative coordinates so moons keep
// their digits.
#pragma once

#include "integrators/gauss_radau.hpp"
#include "integrators/integrator.hpp"
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

    [[nodiscard]] std::string_view name() const noexcept override;
    [[nodiscard]] double time() const noexcept override { return t_; }
    [[nodiscard]] std::size_t steps() const noexcept override { return steps_; }
    void integrate(double t_end) override;
    void relative_state(std::vector<double>& q, std::vector<double>& v) override;
    void set_relative_state(double t, const std::vector<double>& q,
                            const std::vector<double>& v) override;
    [[nodiscard]] const force_model& forces() const noexcept override { return *model_; }

  private:
    method method_;
    std::shared_ptr<const force_model> model_;
    std::optional<gauss_radau> radau_;
    std::optional<odeint_integrator> odeint_;
    std::vector<double> q_, v_;
    double t_ = 0;
    std::size_t steps_ = 0;
};

} // namespace moonwright
