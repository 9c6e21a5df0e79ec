package gaussian

import "math"

// symTridiagonal3 is symTridiagonal for n = 3 with its one Householder step written out: the
// same floating-point operations in the same order (sums that start from 0 start from their
// first term instead), so the same results.
func symTridiagonal3(k []float64, d, e []float64) {
	a := k[:9]
	d, e = d[:3], e[:3]
	x0, x1 := a[3], a[6]
	s := x0*x0 + x1*x1
	if s != 0 {
		norm := math.Sqrt(s)
		alpha := -norm
		if x0 < 0 {
			alpha = norm
		}
		v0, v1 := x0-alpha, x1
		beta := 1 / (norm * (norm + math.Abs(x0)))
		b00, b01, b10, b11 := a[4], a[5], a[7], a[8]
		w0 := beta * (b00*v0 + b01*v1)
		w1 := beta * (b10*v0 + b11*v1)
		pv := w0*v0 + w1*v1
		h := beta / 2 * pv
		w0 -= h * v0
		w1 -= h * v1
		a[4] = b00 - (v0*w0 + w0*v0)
		a[5] = b01 - (v0*w1 + w0*v1)
		a[7] = b10 - (v1*w0 + w1*v0)
		a[8] = b11 - (v1*w1 + w1*v1)
		e[0] = alpha
	} else {
		e[0] = 0
	}
	d[0], d[1], d[2] = a[0], a[4], a[8]
	e[1] = a[5]
	e[2] = 0
}
