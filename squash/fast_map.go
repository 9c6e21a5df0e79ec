package squash

import (
	"math"

	"keyceiling/gaussian"
)

// Closed-form channels of the two smallest families. Split and TMSSplit build their
// symplectic from the identity with one or three elementary transforms, so the kept rows of
// S have at most three nonzero entries each; these functions write X and Y from those
// entries directly, with the same floating-point operations as Build followed by channelOf
// (the products and sums with exact zeros there change nothing), so the maps are identical
// to the last bit. fast_map_test.go checks that.

// splitChannel writes Split's map at p into ch.
func splitChannel(p []float64, ch *gaussian.Channel) {
	t := transmissivity(p[0])
	c, d := math.Sqrt(t), math.Sqrt(1-t)
	ch.In, ch.Out = gaussian.EnvModes, 1
	ch.X.Reset(2, 4)
	ch.Y.Reset(2, 2)
	x, y := ch.X.Data(), ch.Y.Data()
	x[0], x[4+1] = c, c
	v := d * d // the ancilla is vacuum: weight 2 * 0 + 1 = 1
	y[0], y[3] = v, v
}

// tmsSplitChannel writes TMSSplit's map at p into ch.
func tmsSplitChannel(p []float64, ch *gaussian.Channel) {
	r := boundedSqueezing(p[0])
	c, sh := coshSinh(r)
	t1, t2 := transmissivity(p[1]), transmissivity(p[2])
	c1, d1 := math.Sqrt(t1), math.Sqrt(1-t1)
	c2, d2 := math.Sqrt(t2), math.Sqrt(1-t2)
	w1, w2 := 2*occupation(p[3])+1, 2*occupation(p[4])+1
	ch.In, ch.Out = gaussian.EnvModes, 2
	ch.X.Reset(4, 4)
	ch.Y.Reset(4, 4)
	x, y := ch.X.Data(), ch.Y.Data()
	// Rows x1, p1, x2, p2 of the kept modes on the columns x, p of env1 and env2.
	x[0], x[2] = c1*c, c1*sh
	x[4+1], x[4+3] = c1*c, -(c1 * sh)
	x[8+0], x[8+2] = c2*sh, c2*c
	x[12+1], x[12+3] = -(c2 * sh), c2*c
	y1, y2 := w1*(d1*d1), w2*(d2*d2)
	y[0], y[5], y[10], y[15] = y1, y1, y2, y2
}

// coshSinh returns math.Cosh(r), math.Sinh(r) for |r| <= 21 with one exponential (the same
// operations as package math's, which calls Exp once in each).
func coshSinh(r float64) (c, s float64) {
	a := math.Abs(r)
	if a > 21 {
		return math.Cosh(r), math.Sinh(r)
	}
	ex := math.Exp(a)
	inv := 1 / ex
	c = (ex + inv) * 0.5
	if a > 0.5 {
		s = (ex - inv) * 0.5
		if r < 0 {
			s = -s
		}
	} else {
		s = math.Sinh(r)
	}
	return c, s
}

// setIdentity makes s the n x n identity without building and copying a Matrix value.
func setIdentity(s *gaussian.Matrix, n int) {
	s.Reset(n, n)
	d := s.Data()
	for i := 0; i < n; i++ {
		d[i*n+i] = 1
	}
}
