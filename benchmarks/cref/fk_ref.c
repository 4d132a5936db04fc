/* A straightforward compiled forward-kinematics kernel, for comparison only (benchmarks/fk_bench.py).
 *
 * Structure of arrays: q is (n, N) joint-major, out is (N, 4, 4).  Each joint's transform is
 * pre_i · M_i(q_i) · post_i with M_i a turn about z (revolute) or a slide along z (prismatic); pre and
 * post are 3 × 4 affine matrices.  Sines and cosines are computed for a chunk's joint row first (the
 * compiler vectorises them with the C library's SIMD sin/cos: cc -O3 -ffast-math -march=native), then
 * the chain product for the chunk, one thread.  Poser never uses this code.
 */
#include <math.h>
#include <stdlib.h>

/* Structure of arrays for the pose entries too, in chunks of CH poses: every loop runs over poses and
 * vectorises. */
#define CH 64
void fk_ref_soa(int n, long N, const double *q, const double *head, const double *pre, const double *post,
                const double *tail, const int *revolute, double *out) {
    double T[12][CH], U[12][CH], S[CH], C[CH];
    for (long i0 = 0; i0 < N; i0 += CH) {
        long m = (N - i0 < CH) ? N - i0 : CH;
        for (int k = 0; k < 12; k++) for (long i = 0; i < m; i++) T[k][i] = head[k];
        for (int j = 0; j < n; j++) {
            const double *x = q + (long)j * N + i0;
            const double *a = pre + 12 * j, *b = post + 12 * j;
            /* U = T · pre */
            for (int r = 0; r < 3; r++) for (int c = 0; c < 4; c++) {
                double a0 = a[c], a1 = a[4 + c], a2 = a[8 + c], a3 = (c == 3) ? 1.0 : 0.0;
                for (long i = 0; i < m; i++)
                    U[4 * r + c][i] = T[4 * r][i] * a0 + T[4 * r + 1][i] * a1 + T[4 * r + 2][i] * a2 + T[4 * r + 3][i] * a3;
            }
            /* U = U · M(q): columns 0, 1 turn (revolute) or column 3 slides along column 2 (prismatic) */
            if (revolute[j]) {
                for (long i = 0; i < m; i++) S[i] = sin(x[i]);
                for (long i = 0; i < m; i++) C[i] = cos(x[i]);
                for (int r = 0; r < 3; r++) for (long i = 0; i < m; i++) {
                    double u0 = U[4 * r][i], u1 = U[4 * r + 1][i];
                    U[4 * r][i] = u0 * C[i] + u1 * S[i];
                    U[4 * r + 1][i] = u1 * C[i] - u0 * S[i];
                }
            } else {
                for (int r = 0; r < 3; r++) for (long i = 0; i < m; i++) U[4 * r + 3][i] += U[4 * r + 2][i] * x[i];
            }
            /* T = U · post */
            for (int r = 0; r < 3; r++) for (int c = 0; c < 4; c++) {
                double b0 = b[c], b1 = b[4 + c], b2 = b[8 + c], b3 = (c == 3) ? 1.0 : 0.0;
                for (long i = 0; i < m; i++)
                    T[4 * r + c][i] = U[4 * r][i] * b0 + U[4 * r + 1][i] * b1 + U[4 * r + 2][i] * b2 + U[4 * r + 3][i] * b3;
            }
        }
        for (int r = 0; r < 3; r++) for (int c = 0; c < 4; c++) {
            double b0 = tail[c], b1 = tail[4 + c], b2 = tail[8 + c], b3 = (c == 3) ? 1.0 : 0.0;
            for (long i = 0; i < m; i++) {
                double v = T[4 * r][i] * b0 + T[4 * r + 1][i] * b1 + T[4 * r + 2][i] * b2 + T[4 * r + 3][i] * b3;
                out[16 * (i0 + i) + 4 * r + c] = v;
            }
        }
        for (long i = 0; i < m; i++) {
            double *o = out + 16 * (i0 + i);
            o[12] = 0.0; o[13] = 0.0; o[14] = 0.0; o[15] = 1.0;
        }
    }
}
