package squash

import (
	"math"
	"math/rand/v2"
	"testing"

	"keyceiling/gaussian"
)

// The closed-form channels of Split and TMSSplit (MapWork.Map's shortcut) are bit for bit
// those of Build followed by channelOf, and coshSinh is math.Cosh, math.Sinh.
func TestFastChannelsMatchBuild(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 9))
	for _, fam := range []Family{Split{}, TMSSplit{}} {
		for trial := 0; trial < 2000; trial++ {
			p := make([]float64, fam.NumParams())
			sc := []float64{0.1, 1, 3, 30}[trial%4]
			for j := range p {
				p[j] = sc * (2*rng.Float64() - 1)
				if trial%7 == 0 && rng.IntN(2) == 0 {
					p[j] = 0
				}
			}
			var w MapWork
			var fast gaussian.Channel
			w.Map(fam, p, &fast)
			d := BuildDilation(fam, p)
			slow := d.Channel()
			if fast.In != slow.In || fast.Out != slow.Out || !sameBits(&fast.X, &slow.X) || !sameBits(&fast.Y, &slow.Y) {
				t.Fatalf("%s at %v: fast map\n%v\n%v\nBuild + channelOf\n%v\n%v", fam.Name(), p, fast.X.String(), fast.Y.String(), slow.X.String(), slow.Y.String())
			}
		}
	}
	for trial := 0; trial < 100000; trial++ {
		r := 25 * (2*rng.Float64() - 1)
		if trial%3 == 0 {
			r /= 40
		}
		c, s := coshSinh(r)
		if c != math.Cosh(r) || s != math.Sinh(r) {
			t.Fatalf("coshSinh(%v) = %v, %v; want %v, %v", r, c, s, math.Cosh(r), math.Sinh(r))
		}
	}
}

// sameBits reports whether a and b have the same shape and equal entries (+0 == -0).
func sameBits(a, b *gaussian.Matrix) bool {
	ar, ac := a.Dims()
	br, bc := b.Dims()
	if ar != br || ac != bc {
		return false
	}
	for i := 0; i < ar; i++ {
		for j := 0; j < ac; j++ {
			if a.At(i, j) != b.At(i, j) {
				return false
			}
		}
	}
	return true
}
