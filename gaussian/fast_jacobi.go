package gaussian

import "math"

//go:generate go run ./internal/genjacobi

// Eigenvalues of the phase-covariant route's 4 x 4 and two 3 x 3 symmetric problems (the
// TMSSplit case, CovSpectra2) by cyclic Jacobi sweeps run in lockstep.
//
// Why Jacobi here, where CovariantSpectrum uses Householder tridiagonalisation and implicit
// QL: for these sizes much of the cost is the latency of chains of dependent square roots
// and divisions. A QL sweep chases one bulge through the matrix, rotation after rotation,
// and the 4 x 4 problem needs about five sweeps after a tridiagonalisation that is itself a
// chain; a cyclic Jacobi sweep of a 4 x 4 matrix is three rounds of two independent
// rotations (the parallel ordering (0,1)(2,3), (0,2)(1,3), (0,3)(1,2)), and the two 3 x 3
// problems rotate alongside in the same rounds, so four chains overlap. Cyclic Jacobi
// converges quadratically (Henrici, J. SIAM 6, 144 (1958), recalled from memory; Golub and
// Van Loan, Matrix Computations, 4th ed., sec. 8.5): at the 200 random TMSSplit points of
// BenchmarkTargetValuePoints the 4 x 4 problem passes the linear test below after three
// sweeps, the 3 x 3 ones after two (18), three (131) or four (51), and the quadratic test
// stops most of them earlier. Measured in one binary against the QL route (docs/speed.md,
// fourth round): about 15% less time per Target.Value.
//
// Rotation. For the pair (p, q) with d = a_qq - a_pp, b = 2 a_pq, r = sqrt(d^2 + b^2) and
// n = r + |d|, the rotation that zeroes a_pq with |angle| <= pi/4 (the choice of
// Rutishauser, Numer. Math. 9, 1 (1966), recalled from memory) has
//
//	c = n / sqrt(2 r n),  s = sgn(d) b / sqrt(2 r n),  t = s / c = sgn(d) b / n,
//
// (c^2 + s^2 = (n^2 + b^2) / (2 r n) = 1 because b^2 = r^2 - d^2), and the diagonal moves by
// t a_pq = sgn(d) b^2 / (2 n) = sgn(d) b^2 r / (2 r n): one division and two square roots
// per rotation, where the textbook form (theta = d / b, t, then c = 1 / sqrt(1 + t^2)) has
// three divisions. The other entries of rows p and q: a'_kp = c a_kp - s a_kq,
// a'_kq = s a_kp + c a_kq. When 2 r n < jacobiMinW (|a_pq| and |d| both below about
// 2^-450) the rotation is skipped: the pair counts as converged for any matrix whose largest
// diagonal entry is above 2^-398, and a matrix smaller than that never passes the tests
// below and goes to the fallback.
//
// Stopping tests, before each sweep, for each matrix: the linear test, every off-diagonal
// entry at most t = eps times the largest diagonal entry, after which the diagonal holds
// the eigenvalues to within the 2-norm of the off-diagonal part (Weyl), at most sqrt(12) t
// for the 4 x 4; or, from sweep jacobiQuadraticFrom on (and then also before the second and
// third rounds of a sweep), the quadratic test jacobiSeparated, which bounds that distance
// by t/2. Add the rounding of the rotations (each orthogonal to
// a few ulps): absolute accuracy of order eps |K|, the class of the QL route
// (TestCovSpectra2JacobiAccuracy: at most 4.9 eps max|K_ij| from 256-bit eigenvalues).
// jacobiLockstepGen reports false, having written nothing, if an entry is not finite or
// exceeds jacobiMaxEntry, or if jacobiMaxSweeps sweeps do not converge; CovSpectra2 then
// uses the QL route.
const (
	jacobiMaxSweeps = 30
	jacobiMaxEntry  = 0x1p400
	jacobiMinW      = 0x1p-900
)

// jacobiMaxEntryBits is the bit pattern of jacobiMaxEntry: magnitudes compare as their bit
// patterns do (IEEE 754-2019, sec. 3.4), and every NaN's pattern exceeds it.
var jacobiMaxEntryBits = math.Float64bits(jacobiMaxEntry)

// absBits is the bit pattern of |x|.
func absBits(x float64) uint64 { return math.Float64bits(x) &^ (1 << 63) }

// jacobiQuadraticFrom is the first sweep at whose start, and before whose second and third
// rounds, jacobiSeparated is tried for the matrices that fail the linear test (measured
// against starting after one or three sweeps: 2.1% and 2.0% faster).
const jacobiQuadraticFrom = 2

// jacobiSeparated is the quadratic stopping test: it reports whether every eigenvalue of a
// symmetric n x n matrix lies within t/2 of a distinct diagonal entry, given o, the largest
// off-diagonal magnitude, gap, the smallest |a_ii - a_jj| (i != j), and t = eps max|a_ii|,
// the linear test's tolerance. The bound is Gershgorin's theorem after a diagonal similarity
// (Wilkinson, The Algebraic Eigenvalue Problem (1965), ch. 2, on the perturbation of simple
// eigenvalues): with R_i = sum_{j != i} |a_ij| <= (n-1) o = R, m_i = max_{j != i} |a_ij| <= o
// and g_i = min_{j != i} (|a_ii - a_jj| - R_j) >= gap - R = g, multiplying row i by
// sigma = rho / R_i and column i by 1 / sigma leaves disc i the radius rho = 2 m_i R_i / g_i
// and gives disc j at most the radius R_j + g_i / 2, so for 4 m_i R_i < g_i^2 disc i is
// disjoint from the others and holds exactly one eigenvalue; two such discs i, j have radii
// below g_i / 2 and g_j / 2 and so are disjoint from each other too. The test asks for
// 16 o R <= g^2 (a factor 4 of slack), g >= 2^-20 max|a_ii| (so that the rounding of its own
// arithmetic, relative 1e-15, cannot matter), and 4 o R <= t g, so that rho <= t/2.
// TestJacobiSeparatedBound checks the claim against 256-bit eigenvalues.
func jacobiSeparated(n int, o, t, gap float64) bool {
	const eps = 0x1p-52
	r := float64(n-1) * o
	g := gap - r
	return g >= 0x1p-20*(t/eps) && 16*o*r <= g*g && 4*o*r <= t*g
}
