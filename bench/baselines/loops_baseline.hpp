#pragma once
// Fixed-size C arrays and nested loops, as a user would write the step without a library (header: each size
// translation unit of the bench instantiates it).
#include <cmath>

namespace keel_bench {

template <typename T, int N, int M>
void loops_step(T (&x)[N], T (&p)[N][N], const T (&f)[N][N], const T (&q)[N][N], const T (&h)[M][N],
                const T (&r)[M][M], const T (&z)[M]) {
  T xn[N], fp[N][N];
  for (int i = 0; i < N; ++i) {
    xn[i] = 0;
    for (int j = 0; j < N; ++j) xn[i] += f[i][j] * x[j];
  }
  for (int i = 0; i < N; ++i)
    for (int j = 0; j < N; ++j) {
      fp[i][j] = 0;
      for (int k = 0; k < N; ++k) fp[i][j] += f[i][k] * p[k][j];
    }
  for (int i = 0; i < N; ++i)
    for (int j = 0; j < N; ++j) {
      T s = q[i][j];
      for (int k = 0; k < N; ++k) s += fp[i][k] * f[j][k];
      p[i][j] = s;
    }
  T pht[N][M], s[M][M], l[M][M], k[N][M], y[M];
  for (int i = 0; i < N; ++i)
    for (int j = 0; j < M; ++j) {
      pht[i][j] = 0;
      for (int c = 0; c < N; ++c) pht[i][j] += p[i][c] * h[j][c];
    }
  for (int i = 0; i < M; ++i)
    for (int j = 0; j < M; ++j) {
      s[i][j] = r[i][j];
      for (int c = 0; c < N; ++c) s[i][j] += h[i][c] * pht[c][j];
    }
  for (int j = 0; j < M; ++j) {  // Cholesky S = L Lᵀ
    T d = s[j][j];
    for (int c = 0; c < j; ++c) d -= l[j][c] * l[j][c];
    l[j][j] = std::sqrt(d);
    for (int i = j + 1; i < M; ++i) {
      T v = s[i][j];
      for (int c = 0; c < j; ++c) v -= l[i][c] * l[j][c];
      l[i][j] = v / l[j][j];
    }
  }
  for (int row = 0; row < N; ++row) {  // K row = S⁻¹ (P Hᵀ row)
    T v[M];
    for (int i = 0; i < M; ++i) {
      T t = pht[row][i];
      for (int c = 0; c < i; ++c) t -= l[i][c] * v[c];
      v[i] = t / l[i][i];
    }
    for (int i = M - 1; i >= 0; --i) {
      T t = v[i];
      for (int c = i + 1; c < M; ++c) t -= l[c][i] * v[c];
      v[i] = t / l[i][i];
    }
    for (int i = 0; i < M; ++i) k[row][i] = v[i];
  }
  for (int i = 0; i < M; ++i) {
    y[i] = z[i];
    for (int c = 0; c < N; ++c) y[i] -= h[i][c] * xn[c];
  }
  for (int i = 0; i < N; ++i) {
    x[i] = xn[i];
    for (int c = 0; c < M; ++c) x[i] += k[i][c] * y[c];
  }
  T a[N][N], ap[N][N], kr[N][M];
  for (int i = 0; i < N; ++i)
    for (int j = 0; j < N; ++j) {
      a[i][j] = (i == j) ? T(1) : T(0);
      for (int c = 0; c < M; ++c) a[i][j] -= k[i][c] * h[c][j];
    }
  for (int i = 0; i < N; ++i)
    for (int j = 0; j < N; ++j) {
      ap[i][j] = 0;
      for (int c = 0; c < N; ++c) ap[i][j] += a[i][c] * p[c][j];
    }
  for (int i = 0; i < N; ++i)
    for (int j = 0; j < M; ++j) {
      kr[i][j] = 0;
      for (int c = 0; c < M; ++c) kr[i][j] += k[i][c] * r[c][j];
    }
  for (int i = 0; i < N; ++i)
    for (int j = 0; j < N; ++j) {
      T v = 0;
      for (int c = 0; c < N; ++c) v += ap[i][c] * a[j][c];
      for (int c = 0; c < M; ++c) v += kr[i][c] * k[j][c];
      p[i][j] = v;
    }
}

}  // namespace keel_bench
