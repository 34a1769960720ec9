// Random walks in varying diffusivity: the well-mixed test of Visser (1997),
// Fickian spread for a constant K, and reflection at the layer ends.
#include <catch2/catch.hpp>

#include <cmath>
#include <vector>

#include "cullcast/base/random.hpp"
#include "cullcast/drift/visser_walk.hpp"

using namespace cullcast;
using namespace cullcast::drift;

namespace {

// Well-mixed test profile quoted with Visser (1997), Mar. Ecol. Prog. Ser.
// 158:275–281, and Ross & Sharples (2004), Limnol. Oceanogr. Methods 2:289–302:
// K(z) = 0.001 + 0.0136245 z − 0.00263245 z² + 2.11875e−4 z³ − 8.65898e−6 z⁴
//        + 1.7623e−7 z⁵ − 1.40918e−9 z⁶  (m2 s-1; z = height above bed, 0–40 m).
constexpr double kC[7] = {0.001, 0.0136245, -0.00263245, 2.11875e-4, -8.65898e-6, 1.7623e-7, -1.40918e-9};

DiffusivityPoint profile(double z) {
  double k = 0, dk = 0;
  for (int n = 6; n >= 0; --n) k = k * z + kC[n];
  for (int n = 6; n >= 1; --n) dk = dk * z + n * kC[n];
  return {k, dk};
}

// Chi-square statistic of counts in 1 m bins over 0..40 m against uniform.
double chi_square_uniform(const std::vector<double>& z) {
  std::vector<double> bins(40, 0.0);
  for (double v : z) bins[std::min(39, static_cast<int>(v))] += 1;
  const double expected = static_cast<double>(z.size()) / 40;
  double chi2 = 0;
  for (double b : bins) chi2 += (b - expected) * (b - expected) / expected;
  return chi2;
}

template <class Step>
std::vector<double> well_mixed_run(const Step& step, int particles, double dt_s, double hours) {
  const CounterRandom rng(2024);
  std::vector<double> z(particles);
  for (int i = 0; i < particles; ++i) z[i] = 40.0 * (i + 0.5) / particles;  // exactly uniform
  const int steps = static_cast<int>(hours * 3600 / dt_s);
  for (int k = 0; k < steps; ++k) {
    for (int i = 0; i < particles; ++i) {
      const double r = rng.normal2({0, 0, static_cast<std::uint32_t>(i)}, k, Draw::vertical)[0];
      z[i] = reflect_into(step(z[i], dt_s, r), 0.0, 40.0);
    }
  }
  return z;
}

}  // namespace

TEST_CASE("profile matches the derived values of the Visser test profile") {
  // [D] values in REFERENCES §2, recomputed here from the polynomial.
  CHECK(profile(0).k == Approx(0.001).epsilon(1e-12));
  CHECK(profile(20).k == Approx(0.00382168).epsilon(1e-5));
  CHECK(profile(40).k == Approx(0.00102192).epsilon(1e-4));
  CHECK(profile(4.495).k == Approx(0.025073).epsilon(1e-4));
  CHECK(std::fabs(profile(4.495).dk) < 1e-5);  // the maximum
}

TEST_CASE("Visser 1997 well-mixed test: corrected scheme keeps a uniform population uniform") {
  // Visser (1997) Mar. Ecol. Prog. Ser. 158:275–281: the drift-corrected step
  // keeps a well-mixed state; the naive step accumulates particles where K is
  // low. Δt = 10 s ≪ 1/max|K''| ≈ 190 s (the step criterion quoted there).
  // Critical value: scipy.stats.chi2.ppf(0.999, 39) = 72.05 (40 bins, 39 d.o.f.).
  const double critical = 72.05;
  const int n = 20000;
  const auto corrected = well_mixed_run(
      [](double z, double dt, double r) { return visser_step(z, dt, r, profile); }, n, 10.0, 6.0);
  const auto naive = well_mixed_run(
      [](double z, double dt, double r) { return naive_step(z, dt, r, profile); }, n, 10.0, 6.0);
  const double chi_corrected = chi_square_uniform(corrected);
  const double chi_naive = chi_square_uniform(naive);
  INFO("chi2 corrected " << chi_corrected << ", naive " << chi_naive);
  CHECK(chi_corrected < critical);
  CHECK(chi_naive > 10 * critical);  // demonstrably not uniform
  // The naive scheme drains the high-K layer near the bed (max K at 4.5 m)
  // towards the low-K upper half; the corrected one keeps a quarter there.
  std::size_t high_k_naive = 0, high_k_corrected = 0;
  for (double z : naive) high_k_naive += z >= 2.0 && z < 12.0;
  for (double z : corrected) high_k_corrected += z >= 2.0 && z < 12.0;
  INFO("2-12 m: naive " << high_k_naive << ", corrected " << high_k_corrected);
  CHECK(std::fabs(high_k_corrected / double(n) - 0.25) < 0.02);
  CHECK(high_k_naive < 0.8 * high_k_corrected);
}

TEST_CASE("constant Kv spreads as 2 Kv t until the boundaries matter") {
  // Fickian spread (Hunter, Craig & Phillips 1993, J. Comput. Phys.
  // 106:366–376): variance 2Kt; sample-variance standard error 2Kt·sqrt(2/(N−1)).
  const double kv = 0.01, dt = 60, hours = 2;
  const int n = 20000, steps = static_cast<int>(hours * 3600 / dt);
  const CounterRandom rng(7);
  auto constant = [&](double) { return DiffusivityPoint{kv, 0.0}; };
  std::vector<double> z(n, 100.0);  // 100 m below the surface of a 200 m layer
  for (int k = 0; k < steps; ++k) {
    for (int i = 0; i < n; ++i) {
      const double r = rng.normal2({0, 0, static_cast<std::uint32_t>(i)}, k, Draw::vertical)[0];
      z[i] = reflect_into(visser_step(z[i], dt, r, constant), 0.0, 200.0);
    }
  }
  double mean = 0, var = 0;
  for (double v : z) mean += v;
  mean /= n;
  for (double v : z) var += (v - mean) * (v - mean);
  var /= n - 1;
  const double expected = 2 * kv * hours * 3600;  // 144 m²: σ = 12 m, far from the ends
  CHECK(std::fabs(var - expected) < 4 * expected * std::sqrt(2.0 / (n - 1)));
  CHECK(std::fabs(mean - 100.0) < 4 * std::sqrt(expected / n));
}

TEST_CASE("reflection keeps every particle inside the layer") {
  CHECK(reflect_into(-1.5, 0, 10) == Approx(1.5));
  CHECK(reflect_into(11.0, 0, 10) == Approx(9.0));
  CHECK(reflect_into(25.0, 0, 10) == Approx(5.0));   // two reflections
  CHECK(reflect_into(-21.0, 0, 10) == Approx(1.0));
  CHECK(reflect_into(3.0, 5, 5) == 5.0);              // zero thickness pins
  // Large kicks in a thin layer: count and bounds conserved.
  const CounterRandom rng(3);
  auto strong = [](double) { return DiffusivityPoint{1.0, 0.0}; };
  std::vector<double> z(5000, 2.0);
  for (int k = 0; k < 100; ++k) {
    for (std::size_t i = 0; i < z.size(); ++i) {
      const double r = rng.normal2({0, 0, static_cast<std::uint32_t>(i)}, k, Draw::vertical)[0];
      z[i] = reflect_into(visser_step(z[i], 600, r, strong), 0.0, 4.0);
      REQUIRE(z[i] >= 0.0);
      REQUIRE(z[i] <= 4.0);
    }
  }
}

TEST_CASE("central-difference gradient matches the analytic derivative") {
  for (double z : {2.0, 10.0, 30.0}) {
    const auto g = with_gradient(z, 0.01, [](double x) { return profile(x).k; });
    CHECK(g.dk == Approx(profile(z).dk).margin(1e-8));
  }
}
