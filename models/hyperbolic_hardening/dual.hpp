#pragma once
// Forward-mode automatic differentiation with a fixed number of partial derivatives: the reference
// Jacobian of the hyperbolic hardening model's local Newton solve (the hand-written one is checked
// against it), and the derivatives of the cap calibration, from the same code that evaluates the
// residual. Fixed size: no allocation.
//
// The value type V is double, or a Ceres Jet (triaxcal::Dual, sensitivity.hpp) when the quantities
// differentiated here must themselves carry derivatives with respect to the model's parameters
// (the cap calibration of the model's derivative version: Dual<5, triaxcal::Dual>).

#include <ceres/jet.h>

#include <array>
#include <cmath>
#include <type_traits>

namespace triaxcal::hyperbolic {

/// S may stand beside a Dual<N, V> in arithmetic: a built-in number or V itself.
template <class S, class V>
inline constexpr bool is_scalar_for = std::is_arithmetic_v<S> || std::is_same_v<S, V>;

template <int N, class V = double>
struct Dual {
  V v{};
  std::array<V, N> d{};

  Dual() = default;
  Dual(const V& value) : v(value) {}  // NOLINT(google-explicit-constructor): constants mix freely
  template <class S>
    requires(std::is_arithmetic_v<S> && !std::is_same_v<S, V>)
  Dual(S value) : v(value) {}  // NOLINT(google-explicit-constructor)

  static Dual variable(const V& value, int index) {
    Dual x(value);
    x.d[index] = V(1.0);
    return x;
  }

  Dual& operator+=(const Dual& b) {
    v += b.v;
    for (int i = 0; i < N; ++i) d[i] += b.d[i];
    return *this;
  }
  Dual& operator-=(const Dual& b) {
    v -= b.v;
    for (int i = 0; i < N; ++i) d[i] -= b.d[i];
    return *this;
  }
  Dual& operator*=(const Dual& b) {
    for (int i = 0; i < N; ++i) d[i] = d[i] * b.v + v * b.d[i];
    v *= b.v;
    return *this;
  }
  Dual& operator/=(const Dual& b) {
    const V inv = 1.0 / b.v;
    const V r = v * inv;
    for (int i = 0; i < N; ++i) d[i] = (d[i] - r * b.d[i]) * inv;
    v = r;
    return *this;
  }
};

template <int N, class V> Dual<N, V> operator-(Dual<N, V> a) {
  a.v = -a.v;
  for (int i = 0; i < N; ++i) a.d[i] = -a.d[i];
  return a;
}
template <int N, class V> Dual<N, V> operator+(Dual<N, V> a, const Dual<N, V>& b) { return a += b; }
template <int N, class V> Dual<N, V> operator-(Dual<N, V> a, const Dual<N, V>& b) { return a -= b; }
template <int N, class V> Dual<N, V> operator*(Dual<N, V> a, const Dual<N, V>& b) { return a *= b; }
template <int N, class V> Dual<N, V> operator/(Dual<N, V> a, const Dual<N, V>& b) { return a /= b; }
template <int N, class V, class S>
  requires is_scalar_for<S, V>
Dual<N, V> operator+(Dual<N, V> a, S b) {
  a.v += b;
  return a;
}
template <int N, class V, class S>
  requires is_scalar_for<S, V>
Dual<N, V> operator+(S b, Dual<N, V> a) {
  a.v += b;
  return a;
}
template <int N, class V, class S>
  requires is_scalar_for<S, V>
Dual<N, V> operator-(Dual<N, V> a, S b) {
  a.v -= b;
  return a;
}
template <int N, class V, class S>
  requires is_scalar_for<S, V>
Dual<N, V> operator-(S b, const Dual<N, V>& a) {
  return -a + b;
}
template <int N, class V, class S>
  requires is_scalar_for<S, V>
Dual<N, V> operator*(Dual<N, V> a, S b) {
  a.v *= b;
  for (int i = 0; i < N; ++i) a.d[i] *= b;
  return a;
}
template <int N, class V, class S>
  requires is_scalar_for<S, V>
Dual<N, V> operator*(S b, Dual<N, V> a) {
  return a * b;
}
template <int N, class V, class S>
  requires is_scalar_for<S, V>
Dual<N, V> operator/(Dual<N, V> a, S b) {
  return a * (1.0 / b);
}
template <int N, class V, class S>
  requires is_scalar_for<S, V>
Dual<N, V> operator/(S b, const Dual<N, V>& a) {
  Dual<N, V> r(b / a.v);
  const V k = -r.v / a.v;
  for (int i = 0; i < N; ++i) r.d[i] = k * a.d[i];
  return r;
}

template <int N, class V> Dual<N, V> sqrt(const Dual<N, V>& a) {
  using std::sqrt;
  Dual<N, V> r(sqrt(a.v));
  const V k = 0.5 / r.v;
  for (int i = 0; i < N; ++i) r.d[i] = k * a.d[i];
  return r;
}
template <int N, class V> Dual<N, V> pow(const Dual<N, V>& a, double e) {
  using std::pow;
  Dual<N, V> r(pow(a.v, e));
  const V k = e * r.v / a.v;
  for (int i = 0; i < N; ++i) r.d[i] = k * a.d[i];
  return r;
}
/// An exponent that carries derivatives itself (V a Jet): a^e with both differentiated.
template <int N, class V>
  requires(!std::is_same_v<V, double>)
Dual<N, V> pow(const Dual<N, V>& a, const V& e) {
  using std::pow;
  Dual<N, V> r(pow(a.v, e));
  const V k = e * r.v / a.v;
  for (int i = 0; i < N; ++i) r.d[i] = k * a.d[i];
  return r;
}
template <int N, class V> Dual<N, V> exp(const Dual<N, V>& a) {
  using std::exp;
  Dual<N, V> r(exp(a.v));
  for (int i = 0; i < N; ++i) r.d[i] = r.v * a.d[i];
  return r;
}

inline double value(double x) { return x; }
template <int N> double value(const ceres::Jet<double, N>& x) { return x.a; }
template <int N, class V> double value(const Dual<N, V>& x) { return value(x.v); }

/// The smaller / larger of two values, derivative of the one chosen.
template <class T> T smaller(const T& a, const T& b) { return value(a) <= value(b) ? a : b; }
template <class T> T larger(const T& a, const T& b) { return value(a) >= value(b) ? a : b; }

}  // namespace triaxcal::hyperbolic
