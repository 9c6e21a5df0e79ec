package gaussian

import (
	"fmt"
	"math"
	"strings"
)

// MaxModes is the largest number of modes a Matrix can describe.
const MaxModes = 8

// MaxDim is the largest row or column count of a Matrix (2 MaxModes).
const MaxDim = 2 * MaxModes

// Matrix is a small dense real matrix with fixed backing storage (row-major). Its zero
// value is the 0 x 0 matrix. Matrices are values: assignment copies them, and no method
// allocates.
type Matrix struct {
	rows, cols int
	d          [MaxDim * MaxDim]float64
}

// NewMatrix returns an r x c zero matrix. It panics if r or c exceeds MaxDim.
func NewMatrix(r, c int) Matrix {
	var m Matrix
	m.Reset(r, c)
	return m
}

// Reset makes m an r x c zero matrix.
func (m *Matrix) Reset(r, c int) {
	if r < 0 || c < 0 || r > MaxDim || c > MaxDim {
		panic(fmt.Sprintf("gaussian: matrix size %dx%d outside 0..%d", r, c, MaxDim))
	}
	m.rows, m.cols = r, c
	clear(m.d[:r*c])
}

// FromRows builds a matrix from a slice of equal-length rows.
func FromRows(rows [][]float64) (Matrix, error) {
	r := len(rows)
	if r == 0 {
		return Matrix{}, nil
	}
	c := len(rows[0])
	if r > MaxDim || c > MaxDim {
		return Matrix{}, fmt.Errorf("matrix %dx%d is larger than %dx%d", r, c, MaxDim, MaxDim)
	}
	m := NewMatrix(r, c)
	for i, row := range rows {
		if len(row) != c {
			return Matrix{}, fmt.Errorf("row %d has %d entries, want %d", i, len(row), c)
		}
		for j, v := range row {
			m.d[i*c+j] = v
		}
	}
	return m, nil
}

// Identity returns the n x n identity.
func Identity(n int) Matrix {
	m := NewMatrix(n, n)
	for i := 0; i < n; i++ {
		m.d[i*n+i] = 1
	}
	return m
}

// Dims returns the row and column counts.
func (m *Matrix) Dims() (int, int) { return m.rows, m.cols }

// At returns entry (i, j).
func (m *Matrix) At(i, j int) float64 { return m.d[i*m.cols+j] }

// Set sets entry (i, j).
func (m *Matrix) Set(i, j int, v float64) { m.d[i*m.cols+j] = v }

// Rows returns the entries as a freshly allocated slice of rows (for output, not hot paths).
func (m *Matrix) Rows() [][]float64 {
	out := make([][]float64, m.rows)
	for i := range out {
		out[i] = append([]float64(nil), m.d[i*m.cols:(i+1)*m.cols]...)
	}
	return out
}

// Mul sets m = a b. m may not alias a or b.
func (m *Matrix) Mul(a, b *Matrix) {
	if a.cols != b.rows {
		panic(fmt.Sprintf("gaussian: Mul of %dx%d by %dx%d", a.rows, a.cols, b.rows, b.cols))
	}
	r, c, k := a.rows, b.cols, a.cols
	m.rows, m.cols = r, c
	for i := 0; i < r; i++ {
		for j := 0; j < c; j++ {
			s := 0.0
			for l := 0; l < k; l++ {
				s += a.d[i*k+l] * b.d[l*c+j]
			}
			m.d[i*c+j] = s
		}
	}
}

// MulTrans sets m = a b^T. m may not alias a or b.
func (m *Matrix) MulTrans(a, b *Matrix) {
	if a.cols != b.cols {
		panic(fmt.Sprintf("gaussian: MulTrans of %dx%d by (%dx%d)^T", a.rows, a.cols, b.rows, b.cols))
	}
	r, c, k := a.rows, b.rows, a.cols
	m.rows, m.cols = r, c
	for i := 0; i < r; i++ {
		for j := 0; j < c; j++ {
			s := 0.0
			for l := 0; l < k; l++ {
				s += a.d[i*k+l] * b.d[j*k+l]
			}
			m.d[i*c+j] = s
		}
	}
}

// Congruence sets m = a v a^T using tmp as scratch. m, tmp, a and v must be distinct.
func (m *Matrix) Congruence(a, v, tmp *Matrix) {
	tmp.Mul(a, v)
	m.MulTrans(tmp, a)
}

// Transpose sets m = a^T (m may not alias a).
func (m *Matrix) Transpose(a *Matrix) {
	m.rows, m.cols = a.cols, a.rows
	for i := 0; i < a.rows; i++ {
		for j := 0; j < a.cols; j++ {
			m.d[j*m.cols+i] = a.d[i*a.cols+j]
		}
	}
}

// Add sets m = m + s a (same shape).
func (m *Matrix) AddScaled(s float64, a *Matrix) {
	if a.rows != m.rows || a.cols != m.cols {
		panic("gaussian: AddScaled shape mismatch")
	}
	n := m.rows * m.cols
	for i := 0; i < n; i++ {
		m.d[i] += s * a.d[i]
	}
}

// Scale multiplies every entry by s.
func (m *Matrix) Scale(s float64) {
	n := m.rows * m.cols
	for i := 0; i < n; i++ {
		m.d[i] *= s
	}
}

// Symmetrize replaces a square m by (m + m^T)/2, removing round-off asymmetry.
func (m *Matrix) Symmetrize() {
	n := m.rows
	for i := 0; i < n; i++ {
		for j := i + 1; j < n; j++ {
			v := 0.5 * (m.d[i*n+j] + m.d[j*n+i])
			m.d[i*n+j], m.d[j*n+i] = v, v
		}
	}
}

// SetBlock copies a into m with its top-left corner at (r0, c0).
func (m *Matrix) SetBlock(r0, c0 int, a *Matrix) {
	for i := 0; i < a.rows; i++ {
		copy(m.d[(r0+i)*m.cols+c0:(r0+i)*m.cols+c0+a.cols], a.d[i*a.cols:(i+1)*a.cols])
	}
}

// MaxAbs returns the largest absolute entry (0 for an empty matrix).
func (m *Matrix) MaxAbs() float64 {
	x := 0.0
	for _, v := range m.d[:m.rows*m.cols] {
		x = math.Max(x, math.Abs(v))
	}
	return x
}

// IsFinite reports whether every entry is finite.
func (m *Matrix) IsFinite() bool {
	for _, v := range m.d[:m.rows*m.cols] {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return false
		}
	}
	return true
}

// MaxAbsDiff returns max |m - a| entrywise; shapes must match.
func (m *Matrix) MaxAbsDiff(a *Matrix) float64 {
	if a.rows != m.rows || a.cols != m.cols {
		return math.Inf(1)
	}
	x := 0.0
	for i, v := range m.d[:m.rows*m.cols] {
		x = math.Max(x, math.Abs(v-a.d[i]))
	}
	return x
}

// String formats the matrix for messages and debugging.
func (m Matrix) String() string {
	var b strings.Builder
	for i := 0; i < m.rows; i++ {
		b.WriteString("[")
		for j := 0; j < m.cols; j++ {
			if j > 0 {
				b.WriteString(" ")
			}
			fmt.Fprintf(&b, "%.6g", m.d[i*m.cols+j])
		}
		b.WriteString("]\n")
	}
	return b.String()
}

// SelectModes sets m to the sub-matrix of the square mode-indexed matrix v on the listed
// modes, in the listed order (both quadratures of each mode).
func (m *Matrix) SelectModes(v *Matrix, modes []int) {
	n := 2 * len(modes)
	m.rows, m.cols = n, n
	for a, ma := range modes {
		for b, mb := range modes {
			for qa := 0; qa < 2; qa++ {
				for qb := 0; qb < 2; qb++ {
					m.d[(2*a+qa)*n+2*b+qb] = v.d[(2*ma+qa)*v.cols+2*mb+qb]
				}
			}
		}
	}
}

// DirectSum sets m = a (+) b (block diagonal).
func (m *Matrix) DirectSum(a, b *Matrix) {
	m.Reset(a.rows+b.rows, a.cols+b.cols)
	m.SetBlock(0, 0, a)
	m.SetBlock(a.rows, a.cols, b)
}

// Data returns the row-major backing slice of the rows x cols entries, for in-place kernels.
func (m *Matrix) Data() []float64 { return m.d[:m.rows*m.cols] }
