#!/usr/bin/python3
"""NumPy implementation of keyceiling's squashing objective for the TMSSplit family.

Reference implementation for bench/compare.sh: it evaluates the SAME function as the Go
code's squash.Target.Value for squash.TMSSplit at finite N_S (thermal input) on the
thermal-loss channel, with the conventions of gaussian/doc.go and the physics notes:

  * quadrature order x1,p1,x2,p2,... ("xpxp"), vacuum covariance = identity,
    Omega = direct sum of [[0,1],[-1,0]];
  * g(x) = (x+1) log2(x+1) - x log2 x, S(V) = sum_k g((nu_k - 1)/2);
  * modes (A', A, e, f): input TMSV(N_S) on (A', A), environment TMSV(N_B) on (e, f),
    channel = beam splitter eta on (A, e); outputs (A', B, env1', env2');
  * squashing map (TMSSplit): S = BS(1,3; t2) BS(0,2; t1) TMS(0,1; r) on
    (env1, env2, anc1, anc2), ancillas thermal (n1, n2), kept outputs E' = modes 0, 1:
    X = S[kept, env], Y = S[kept, anc] diag((2n+1) I) S[kept, anc]^T;
  * parameters (p0..p4) -> r = 3 tanh(p0/3), t = sin^2(p), n = 100 tanh(p^2/100)
    (squash/elementary.go: boundedSqueezing, transmissivity, occupation);
  * objective = 1/2 [S(A'E') + S(BE') - S(E') - S(A'BE')] in bits.

It works on covariance matrices (not the Go code's square-root factors), which is accurate
to ~1e-13 bits at the moderate energies compared here. The four entropies are computed in
one batch: each subsystem is padded with vacuum modes to four modes (a vacuum mode has
nu = 1 and contributes g(0) = 0), the four 8x8 matrices are stacked, a batched Cholesky
factorisation V = L L^T gives the antisymmetric L^T Omega L, and one batched
np.linalg.eigvalsh of the Hermitian i L^T Omega L returns +-nu. (This was measured about
1.3x faster than np.linalg.eigvals of Omega V, so the comparison uses it.)

Usage: objective.py --eta 0.9 --nb 1 --ns 1 POINTS_FILE [--min-seconds 2] [--window 0.05]
POINTS_FILE has one parameter vector (5 numbers) per line. Prints one value per line
(%.17g), then "# evals_per_sec X" measured over repeated passes for at least --min-seconds
and "# best_window_evals_per_sec Y", the best rate over windows of whole passes lasting at
least --window seconds.
"""

import argparse
import sys
import time

import numpy as np

MAX_SQUEEZING = 3.0
MAX_ANCILLA_PHOTONS = 100.0
LN2 = np.log(2.0)


def omega(n):
    return np.kron(np.eye(n), np.array([[0.0, 1.0], [-1.0, 0.0]]))


def tmsv(n):
    a = 2 * n + 1
    c = 2 * np.sqrt(n * (n + 1))
    z = np.diag([1.0, -1.0])
    return np.block([[a * np.eye(2), c * z], [c * z, a * np.eye(2)]])


def beam_splitter(nmodes, i, j, t):
    s = np.eye(2 * nmodes)
    c, d = np.sqrt(t), np.sqrt(1 - t)
    for q in range(2):
        s[2 * i + q, 2 * i + q] = c
        s[2 * i + q, 2 * j + q] = d
        s[2 * j + q, 2 * i + q] = -d
        s[2 * j + q, 2 * j + q] = c
    return s


def joint_covariance(eta, nb, ns):
    """Covariance of (A', B, env1', env2') for the thermal-loss dilation, thermal input."""
    v0 = np.zeros((8, 8))
    v0[:4, :4] = tmsv(ns)
    v0[4:, 4:] = tmsv(nb)
    u = beam_splitter(4, 1, 2, eta)
    return u @ v0 @ u.T


class Objective:
    """Precomputes everything that does not depend on the map parameters."""

    def __init__(self, eta, nb, ns):
        self.vj = joint_covariance(eta, nb, ns)
        # Modes of the padded output state W (12x12): 0 A', 1 B, 2-3 E', 4-5 vacuum.
        subsystems = [[0, 2, 3, 4], [1, 2, 3, 4], [2, 3, 4, 5], [0, 1, 2, 3]]
        idx = np.array([[2 * m + q for m in modes for q in range(2)] for modes in subsystems])
        self.rows = idx[:, :, None]
        self.cols = idx[:, None, :]
        self.omega4 = omega(4)
        self.sign = np.array([0.5, 0.5, -0.5, -0.5])  # 1/2 (S_AE + S_BE - S_E - S_ABE)
        self.w = np.eye(12)
        self.t = np.zeros((8, 8))  # output transform: identity on A', B; X on the env rows
        self.t[:4, :4] = np.eye(4)
        self.y = np.zeros((8, 8))
        # Templates: a beam splitter of transmissivity t on (i, j) is
        # rest + sqrt(t) diag + sqrt(1-t) off; the two-mode squeezer on (0, 1) likewise.
        self.bs = [self._bs_templates(0, 2), self._bs_templates(1, 3)]
        rest, c, s = np.eye(8), np.zeros((8, 8)), np.zeros((8, 8))
        for k in range(4):
            rest[k, k] = 0
            c[k, k] = 1
        s[0, 2], s[1, 3], s[2, 0], s[3, 1] = 1, -1, 1, -1
        self.tms = (rest, c, s)

    @staticmethod
    def _bs_templates(i, j):
        rest, c, d = np.eye(8), np.zeros((8, 8)), np.zeros((8, 8))
        for q in range(2):
            a, b = 2 * i + q, 2 * j + q
            rest[a, a] = rest[b, b] = 0
            c[a, a] = c[b, b] = 1
            d[a, b], d[b, a] = 1, -1
        return rest, c, d

    def squashing_map(self, p):
        """(X, Y) of the TMSSplit map at parameters p (squash.TMSSplit.Build, channelOf)."""
        r = MAX_SQUEEZING * np.tanh(p[0] / MAX_SQUEEZING)
        t1, t2 = np.sin(p[1]) ** 2, np.sin(p[2]) ** 2
        n1 = MAX_ANCILLA_PHOTONS * np.tanh(p[3] ** 2 / MAX_ANCILLA_PHOTONS)
        n2 = MAX_ANCILLA_PHOTONS * np.tanh(p[4] ** 2 / MAX_ANCILLA_PHOTONS)
        rest, c, s = self.tms
        tms = rest + np.cosh(r) * c + np.sinh(r) * s
        (r1, c1, d1), (r2, c2, d2) = self.bs
        b02 = r1 + np.sqrt(t1) * c1 + np.sqrt(1 - t1) * d1
        b13 = r2 + np.sqrt(t2) * c2 + np.sqrt(1 - t2) * d2
        s = b13 @ b02 @ tms
        x = s[:4, :4]
        sa = s[:4, 4:]
        noise = np.repeat([2 * n1 + 1, 2 * n2 + 1], 2)
        y = (sa * noise) @ sa.T
        return x, y

    def value(self, p):
        x, y = self.squashing_map(p)
        self.t[4:, 4:] = x
        self.y[4:, 4:] = y
        self.w[:8, :8] = self.t @ self.vj @ self.t.T + self.y
        subs = self.w[self.rows, self.cols]  # (4, 8, 8): A'E', BE', E', A'BE' padded
        chol = np.linalg.cholesky(subs)
        skew = np.swapaxes(chol, 1, 2) @ self.omega4 @ chol  # similar to Omega V
        nu = np.linalg.eigvalsh(1j * skew)[:, 4:]  # ascending: -nu (4), then +nu (4)
        x = np.maximum((nu - 1) / 2, 0)
        # g(x) = (log1p(x) + x log1p(1/x)) / ln 2, with g(0) = 0
        with np.errstate(divide="ignore", invalid="ignore"):
            g = np.where(x > 0, (np.log1p(x) + x * np.log1p(1 / x)) / LN2, 0.0)
        return float(self.sign @ g.sum(axis=1))


def main():
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("points")
    ap.add_argument("--eta", type=float, default=0.9)
    ap.add_argument("--nb", type=float, default=1.0)
    ap.add_argument("--ns", type=float, default=1.0)
    ap.add_argument("--min-seconds", type=float, default=2.0)
    ap.add_argument("--window", type=float, default=0.05)
    a = ap.parse_args()
    pts = np.loadtxt(a.points, ndmin=2)
    if pts.shape[1] != 5:
        sys.exit(f"objective.py: {a.points}: want 5 parameters per line, got {pts.shape[1]}")
    obj = Objective(a.eta, a.nb, a.ns)
    vals = [obj.value(p) for p in pts]
    for v in vals:
        print(f"{v:.17g}")
    # Whole passes through the points for at least --min-seconds; the rate over all of it,
    # and the best rate over windows of whole passes lasting at least --window seconds (the
    # same window as the Go side's, so that both get the same chances at undisturbed time on
    # a shared machine).
    n, start = 0, time.perf_counter()
    best, wn, wstart = 0.0, 0, start
    while True:
        for p in pts:
            obj.value(p)
        n += len(pts)
        wn += len(pts)
        now = time.perf_counter()
        if now - wstart >= a.window:
            best = max(best, wn / (now - wstart))
            wn, wstart = 0, now
        el = now - start
        if el >= a.min_seconds:
            break
    print(f"# evals_per_sec {n / el:.6g}")
    print(f"# best_window_evals_per_sec {max(best, n / el):.6g}")


if __name__ == "__main__":
    main()
