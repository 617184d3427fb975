#pragma once
// Forward-mode automatic differentiation with a fixed number of partial derivatives: the reference
// Jacobian of the hyperbolic hardening model's local Newton solve (the hand-written one is checked
// against it), and the derivatives of the cap calibration, from the same code that evaluates the
// residual. Fixed size: no allocation.

#include <array>
#include <cmath>

namespace triaxcal::hyperbolic {

template <int N>
struct Dual {
  double v = 0.0;
  std::array<double, N> d{};

  Dual() = default;
  Dual(double value) : v(value) {}  // NOLINT(google-explicit-constructor): constants mix freely

  static Dual variable(double value, int index) {
    Dual x(value);
    x.d[index] = 1.0;
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
    const double inv = 1.0 / b.v;
    const double r = v * inv;
    for (int i = 0; i < N; ++i) d[i] = (d[i] - r * b.d[i]) * inv;
    v = r;
    return *this;
  }
};

template <int N> Dual<N> operator-(Dual<N> a) {
  a.v = -a.v;
  for (int i = 0; i < N; ++i) a.d[i] = -a.d[i];
  return a;
}
template <int N> Dual<N> operator+(Dual<N> a, const Dual<N>& b) { return a += b; }
template <int N> Dual<N> operator-(Dual<N> a, const Dual<N>& b) { return a -= b; }
template <int N> Dual<N> operator*(Dual<N> a, const Dual<N>& b) { return a *= b; }
template <int N> Dual<N> operator/(Dual<N> a, const Dual<N>& b) { return a /= b; }
template <int N> Dual<N> operator+(Dual<N> a, double b) { a.v += b; return a; }
template <int N> Dual<N> operator+(double b, Dual<N> a) { a.v += b; return a; }
template <int N> Dual<N> operator-(Dual<N> a, double b) { a.v -= b; return a; }
template <int N> Dual<N> operator-(double b, const Dual<N>& a) { return -a + b; }
template <int N> Dual<N> operator*(Dual<N> a, double b) {
  a.v *= b;
  for (int i = 0; i < N; ++i) a.d[i] *= b;
  return a;
}
template <int N> Dual<N> operator*(double b, Dual<N> a) { return a * b; }
template <int N> Dual<N> operator/(Dual<N> a, double b) { return a * (1.0 / b); }
template <int N> Dual<N> operator/(double b, const Dual<N>& a) {
  Dual<N> r(b / a.v);
  const double k = -r.v / a.v;
  for (int i = 0; i < N; ++i) r.d[i] = k * a.d[i];
  return r;
}

template <int N> Dual<N> sqrt(const Dual<N>& a) {
  Dual<N> r(std::sqrt(a.v));
  const double k = 0.5 / r.v;
  for (int i = 0; i < N; ++i) r.d[i] = k * a.d[i];
  return r;
}
template <int N> Dual<N> pow(const Dual<N>& a, double e) {
  Dual<N> r(std::pow(a.v, e));
  const double k = e * r.v / a.v;
  for (int i = 0; i < N; ++i) r.d[i] = k * a.d[i];
  return r;
}
template <int N> Dual<N> exp(const Dual<N>& a) {
  Dual<N> r(std::exp(a.v));
  for (int i = 0; i < N; ++i) r.d[i] = r.v * a.d[i];
  return r;
}

inline double value(double x) { return x; }
template <int N> double value(const Dual<N>& x) { return x.v; }

/// The smaller / larger of two values, derivative of the one chosen.
template <class T> T smaller(const T& a, const T& b) { return value(a) <= value(b) ? a : b; }
template <class T> T larger(const T& a, const T& b) { return value(a) >= value(b) ? a : b; }

}  // namespace triaxcal::hyperbolic
