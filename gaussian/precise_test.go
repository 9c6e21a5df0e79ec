package gaussian

import (
	"errors"
	"math"
	"math/big"
	"math/rand/v2"
	"testing"
)

// parseRef parses a decimal reference value at more than PrecisePrec bits.
func parseRef(t *testing.T, s string) *big.Float {
	t.Helper()
	x, _, err := big.ParseFloat(s, 10, 2*PrecisePrec, big.ToNearestEven)
	if err != nil {
		t.Fatalf("parse %q: %v", s, err)
	}
	return x
}

// relDiff returns |a - b| / max(|b|, tiny) as float64.
func relDiff(a, b *big.Float) float64 {
	d := new(big.Float).SetPrec(2*PrecisePrec).Sub(a, b)
	d.Abs(d)
	den := new(big.Float).Abs(b)
	if den.Sign() == 0 {
		return toFloat64(d)
	}
	return toFloat64(d.Quo(d, den))
}

// absDiff returns |a - b| as float64.
func absDiff(a, b *big.Float) float64 {
	d := new(big.Float).SetPrec(2*PrecisePrec).Sub(a, b)
	return toFloat64(d.Abs(d))
}

// Reference values computed with GNU bc 1.07 (`bc -l`, scale=85).
const (
	bcLn2    = "0.6931471805599453094172321214581765680755001343602552541206800094933936219696947156058"
	bcPi     = "3.1415926535897932384626433832795028841971693993751058209749445923078164062862089986280"
	bcLn7    = "1.9459101490553133051053527434431797296370847295818611884593901499375798627520692677876"
	bcExp5   = "148.4131591025766034211155800405522796234876675938789890467528451109120648209585760796884"
	bcCos125 = "0.3153223623952686654475385524380380137279857079827568075149991404532894581023470949640"
	bcSin125 = "0.9489846193555862143484908470360492503780160345238922201355570321801262421757229067546"
	bcG05    = "1.3774437510817342721806084159217247631397216115387215906836289818116473416915378437833"
	bcG10    = "4.8344668561366463394897992190898207870872328522536426638932541448302890508339497213039"
)

// Tolerances of these tests, each named once.
const (
	bcRefTol    = 1e-70 // relative, against the bc values (nearly all 77 digits of PrecisePrec)
	identTol    = 1e-70 // exact identities (exp(-x) exp(x) = 1, cos^2 + sin^2 = 1, ...) in big floats
	pureTol     = 1e-40 // symplectic eigenvalues of pure and Williamson states (the brief)
	pureEntTol  = 1e-35 // entropy of a pure state built in big floats (g(x) ~ x log2(1/x) at x ~ 1e-40)
	hugeEntTol  = 1e-18 // entropy of TMSV(1e27): round-off 2^-256 (4e27)^2 ~ 1e-22 in nu, times log
	mathUlps    = 2     // ulps allowed against math.Log (documented accurate to about 1 ulp)
	expUlps     = 4     // ulps allowed against math.Exp
	trigAbsTol  = 1e-15 // absolute, against math.Cos and math.Sin at |phi| <= 1000
	gFloatTol   = 1e-14 // relative, against the float64 G
	float64Tl   = 1e-10 // relative, against the float64 spectrum and entropy of the same V
	jointTol    = 1e-12 // relative, precise dilation against the float64 one (float64 round-off)
	actionTol   = 1e-15 // margins of Model.Action maps, whose sqrt(eta) is float64-rounded
	exactMargin = 1e-50 // margin of X = 2I, Y = 0, whose entries are exact
	boundaryTol = 1e-12 // |margin| of a float64 unitary (round-off of its entries)
	nudgeTol    = 1e-13 // relative change of Y made by PreciseNudgeCP
)

func TestPreciseConstantsAgainstBC(t *testing.T) {
	// Source: GNU bc, l(2) and 4*a(1) at scale=85.
	if d := relDiff(PreciseLn2(), parseRef(t, bcLn2)); d > bcRefTol {
		t.Errorf("ln 2 off by %g", d)
	}
	if d := relDiff(PrecisePi(), parseRef(t, bcPi)); d > bcRefTol {
		t.Errorf("pi off by %g", d)
	}
	if d := relDiff(PreciseLog(preciseF64(7)), parseRef(t, bcLn7)); d > bcRefTol {
		t.Errorf("ln 7 off by %g", d)
	}
	if d := relDiff(PreciseExp(preciseF64(5)), parseRef(t, bcExp5)); d > bcRefTol {
		t.Errorf("e^5 off by %g", d)
	}
	c, s := PreciseCosSin(preciseF64(1.25))
	if d := relDiff(c, parseRef(t, bcCos125)); d > bcRefTol {
		t.Errorf("cos 1.25 off by %g", d)
	}
	if d := relDiff(s, parseRef(t, bcSin125)); d > bcRefTol {
		t.Errorf("sin 1.25 off by %g", d)
	}
}

func TestPreciseLogAgainstMathLog(t *testing.T) {
	// Source: Go's math.Log, documented accurate to about 1 ulp.
	rng := rand.New(rand.NewPCG(1, 2))
	// Subnormal arguments are left out: on linux/amd64 (Go 1.26) math.Log(5e-324) returns
	// -709.09, the log of the smallest normal number, not -744.44; the identity
	// ln 2^k = k ln 2 below covers tiny arguments instead.
	xs := []float64{1, 2, 0.5, math.Sqrt2, math.Sqrt2 / 2, 1 + 1e-15, 1 - 1e-15, 1 + 1e-9, 0.7071, 3,
		0x1p-1022, math.MaxFloat64, 1e-300, 1e300}
	for i := 0; i < 3000; i++ {
		xs = append(xs, math.Pow(10, rng.Float64()*600-300))
	}
	for i := 0; i < 300; i++ {
		xs = append(xs, 1+(rng.Float64()-0.5)*1e-3)
	}
	for _, x := range xs {
		got := toFloat64(PreciseLog(preciseF64(x)))
		want := math.Log(x)
		ulp := math.Nextafter(math.Abs(want), math.Inf(1)) - math.Abs(want)
		if math.Abs(got-want) > mathUlps*ulp {
			t.Errorf("log(%g): precise %.17g, math.Log %.17g", x, got, want)
		}
	}
	// Exact identities: ln(2^k) = k ln 2 and ln(x y) = ln x + ln y (common practice).
	for _, k := range []int{-1074, -1000, -1, 1, 3, 1000} {
		x := newPrecise().SetMantExp(preciseInt(1), k)
		want := newPrecise().Mul(preciseInt(int64(k)), PreciseLn2())
		if d := relDiff(PreciseLog(x), want); d > identTol {
			t.Errorf("ln 2^%d off by %g", k, d)
		}
	}
	x, y := preciseF64(123.456), preciseF64(7.0e-9)
	lhs := PreciseLog(newPrecise().Mul(x, y))
	rhs := newPrecise().Add(PreciseLog(x), PreciseLog(y))
	if d := absDiff(lhs, rhs); d > identTol {
		t.Errorf("ln(xy) - ln x - ln y = %g", d)
	}
}

func TestPreciseExpCosSin(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	one := preciseInt(1)
	for i := 0; i < 200; i++ {
		v := (rng.Float64() - 0.5) * 80
		e := PreciseExp(preciseF64(v))
		// Source: math.Exp (about 1 ulp).
		if got, want := toFloat64(e), math.Exp(v); math.Abs(got-want) > expUlps*0x1p-52*want {
			t.Errorf("exp(%g): %.17g vs %.17g", v, got, want)
		}
		// Identity exp(v) exp(-v) = 1 (common practice).
		p := newPrecise().Mul(e, PreciseExp(preciseF64(-v)))
		if d := absDiff(p, one); d > identTol {
			t.Errorf("exp(%g) exp(-%g) - 1 = %g", v, v, d)
		}
		// exp(log x) = x.
		if v > 0 {
			if d := relDiff(PreciseExp(PreciseLog(preciseF64(v))), preciseF64(v)); d > identTol {
				t.Errorf("exp(log %g) off by %g", v, d)
			}
		}
		phi := (rng.Float64() - 0.5) * 2e3
		c, s := PreciseCosSin(preciseF64(phi))
		// Source: math.Cos, math.Sin (after Go's own argument reduction).
		if math.Abs(toFloat64(c)-math.Cos(phi)) > trigAbsTol || math.Abs(toFloat64(s)-math.Sin(phi)) > trigAbsTol {
			t.Errorf("cos/sin(%g): %g %g vs %g %g", phi, toFloat64(c), toFloat64(s), math.Cos(phi), math.Sin(phi))
		}
		n := newPrecise().Mul(c, c)
		n.Add(n, newPrecise().Mul(s, s))
		if d := absDiff(n, one); d > identTol {
			t.Errorf("cos^2 + sin^2 - 1 = %g at %g", d, phi)
		}
	}
}

func TestPreciseG(t *testing.T) {
	// Sources: physics.md check values g(0.5) = 1.377444, g(1) = 2, g(10) = 4.834467 (6
	// decimals), and bc to 1e-70.
	for _, c := range []struct {
		x    float64
		note float64
		bc   string
	}{{0.5, 1.377444, bcG05}, {1, 2, "2"}, {10, 4.834467, bcG10}} {
		g := PreciseG(preciseF64(c.x))
		if math.Abs(toFloat64(g)-c.note) > 5e-7 {
			t.Errorf("g(%g) = %.9g, physics.md says %g", c.x, toFloat64(g), c.note)
		}
		if d := relDiff(g, parseRef(t, c.bc)); d > bcRefTol {
			t.Errorf("g(%g) off bc by %g", c.x, d)
		}
	}
	for _, x := range []float64{0, -1} {
		if g := PreciseG(preciseF64(x)); g.Sign() != 0 {
			t.Errorf("g(%g) = %v, want 0", x, g)
		}
	}
	// Against the float64 G (a different formula evaluation).
	rng := rand.New(rand.NewPCG(5, 6))
	for i := 0; i < 200; i++ {
		x := math.Pow(10, rng.Float64()*40-20)
		if got, want := toFloat64(PreciseG(preciseF64(x))), G(x); math.Abs(got-want) > gFloatTol*want {
			t.Errorf("g(%g): precise %.17g, float64 %.17g", x, got, want)
		}
	}
}

// randomBigSymplectic returns a product of precise beam splitters, two-mode squeezers,
// squeezers and rotations on n modes (squeezing parameters up to rmax).
func randomBigSymplectic(rng *rand.Rand, n int, rmax float64) *BigMatrix {
	s := BigIdentity(2 * n)
	for k := 0; k < 3*n; k++ {
		var g *BigMatrix
		i := rng.IntN(n)
		j := (i + 1 + rng.IntN(max(n-1, 1))) % n
		switch rng.IntN(4) {
		case 0:
			if n < 2 {
				continue
			}
			g = PreciseBeamSplitter(n, i, j, rng.Float64())
		case 1:
			if n < 2 {
				continue
			}
			g = PreciseTwoModeSqueezer(n, i, j, 1+rng.Float64()*math.Sinh(rmax)*math.Sinh(rmax))
		case 2:
			g = PreciseSqueezer(n, i, (2*rng.Float64()-1)*rmax)
		default:
			g = PrecisePhaseRotation(n, i, rng.Float64()*2*math.Pi)
		}
		s = BigMul(g, s)
	}
	return s
}

// symplecticDefectBig returns max |S Omega S^T - Omega|.
func symplecticDefectBig(s *BigMatrix) float64 {
	om := BigOmega(s.rows / 2)
	d := BigMulTrans(BigMul(s, om), s)
	d.Add(negated(om))
	return d.MaxAbs()
}

func TestPreciseTransformsAreSymplectic(t *testing.T) {
	// Source: definition S Omega S^T = Omega (package doc; Weedbrook et al., RMP 84, 621).
	mats := map[string]*BigMatrix{
		"beam splitter":     PreciseBeamSplitter(3, 0, 2, 0.3),
		"two-mode squeezer": PreciseTwoModeSqueezer(3, 2, 1, 7.5),
		"squeezer r=5":      PreciseSqueezer(2, 1, 5),
		"rotation":          PrecisePhaseRotation(2, 0, 2.2),
	}
	for _, m := range []Model{
		{Kind: ThermalLoss, Eta: 0.37, NB: 2},
		{Kind: Amplifier, Gain: 3.3, NB: 0.1},
		{Kind: AdditiveNoise, Xi: 0.42},
	} {
		d, err := m.PreciseDilation()
		if err != nil {
			t.Fatal(err)
		}
		mats[m.String()] = d.U
	}
	for name, s := range mats {
		scale := s.MaxAbs() * s.MaxAbs()
		if d := symplecticDefectBig(s); d > identTol*scale {
			t.Errorf("%s: symplectic defect %g", name, d)
		}
	}
}

// checkSpectrum compares a precise spectrum with the expected values, relatively.
func checkSpectrum(t *testing.T, name string, got []*big.Float, want []float64, tol float64) {
	t.Helper()
	if len(got) != len(want) {
		t.Fatalf("%s: %d eigenvalues, want %d", name, len(got), len(want))
	}
	for k := range want {
		if d := relDiff(got[k], preciseF64(want[k])); d > tol {
			t.Errorf("%s: nu_%d = %.20g, want %g (rel. diff %g)", name, k, toFloat64(got[k]), want[k], d)
		}
	}
}

func TestPreciseSpectrumSqueezedVacuum(t *testing.T) {
	// Source: a pure Gaussian state (vacuum after a symplectic) has every symplectic
	// eigenvalue 1 (Williamson's theorem; Weedbrook et al., RMP 84, 621, section II).
	// The brief requires 1e-40 for squeezing r = 5.
	for n := 1; n <= 4; n++ {
		s := BigIdentity(2 * n)
		for k := 0; k < n; k++ {
			s = BigMul(PreciseSqueezer(n, k, 5), s)
		}
		for k := 0; k+1 < n; k++ {
			s = BigMul(PreciseBeamSplitter(n, k, k+1, 0.3), s)
		}
		v := BigCongruence(s, BigIdentity(2*n))
		nus, err := PreciseSymplecticSpectrum(v)
		if err != nil {
			t.Fatalf("%d modes: %v", n, err)
		}
		want := make([]float64, n)
		for k := range want {
			want[k] = 1
		}
		checkSpectrum(t, "squeezed vacuum", nus, want, pureTol)
		e, err := PreciseEntropy(v)
		if err != nil || toFloat64(e) > pureEntTol {
			t.Errorf("%d-mode squeezed vacuum entropy %v, %v", n, e, err)
		}
	}
	// TMSV with squeezing r = 5: N = sinh^2 5 (the float64 value, exact as a parameter).
	nus, err := PreciseSymplecticSpectrum(PreciseTMSV(math.Sinh(5) * math.Sinh(5)))
	if err != nil {
		t.Fatal(err)
	}
	checkSpectrum(t, "TMSV r=5", nus, []float64{1, 1}, pureTol)
	// A TMSV with N = 1e27 (the unconstrained evaluations): entropy below 1e-18.
	e, err := PreciseEntropy(PreciseTMSV(1e27))
	if err != nil || toFloat64(e) > hugeEntTol {
		t.Errorf("TMSV(1e27) entropy %v, %v", e, err)
	}
}

func TestPreciseSpectrumWilliamson(t *testing.T) {
	// Source: Williamson's theorem (Williamson, Am. J. Math. 58, 141 (1936)): V = S diag(nu_k,
	// nu_k) S^T has symplectic eigenvalues nu_k for any symplectic S.
	rng := rand.New(rand.NewPCG(7, 8))
	nuAll := []float64{1, 1.5, 3.25, 10, 1000, 2}
	for n := 1; n <= 5; n++ {
		for trial := 0; trial < 4; trial++ {
			d := NewBigMatrix(2*n, 2*n)
			want := append([]float64(nil), nuAll[:n]...)
			if trial == 3 {
				// Equal eigenvalues: the two-mode closed form hands over to the Jacobi path.
				for k := range want {
					want[k] = 2
				}
			}
			for k := 0; k < n; k++ {
				d.At(2*k, 2*k).SetFloat64(want[k])
				d.At(2*k+1, 2*k+1).SetFloat64(want[k])
			}
			v := BigCongruence(randomBigSymplectic(rng, n, 1.5), d)
			nus, err := PreciseSymplecticSpectrum(v)
			if err != nil {
				t.Fatalf("%d modes: %v", n, err)
			}
			sortFloats(want)
			checkSpectrum(t, "Williamson", nus, want, pureTol)
			if n == 2 {
				// The general (Jacobi) algorithm against the two-mode closed form.
				gen, err := preciseSpectrumJacobi(v)
				if err != nil {
					t.Fatal(err)
				}
				checkSpectrum(t, "Williamson, Jacobi path on 2 modes", gen, want, pureTol)
			}
		}
	}
}

func sortFloats(v []float64) {
	for i := 1; i < len(v); i++ {
		for j := i; j > 0 && v[j] < v[j-1]; j-- {
			v[j], v[j-1] = v[j-1], v[j]
		}
	}
}

func TestPreciseSpectrumAgainstFloat64(t *testing.T) {
	// Source: the float64 engine (SymplecticSpectrum, a different algorithm: Cholesky and
	// Jacobi on (L^T Omega L)(L^T Omega L)^T) on the same float64 covariance.
	rng := rand.New(rand.NewPCG(9, 10))
	for n := 1; n <= 6; n++ {
		for trial := 0; trial < 2; trial++ {
			s := randomBigSymplectic(rng, n, 0.8).Matrix()
			th := NewMatrix(2*n, 2*n)
			for k := 0; k < 2*n; k++ {
				th.Set(k, k, 1+2*rng.Float64()*3)
				if k%2 == 1 {
					th.Set(k, k, th.At(k-1, k-1))
				}
			}
			var v, tmp Matrix
			v.Congruence(&s, &th, &tmp)
			v.Symmetrize()
			var sp Spectrum
			if err := SymplecticSpectrum(&v, &sp); err != nil {
				t.Fatal(err)
			}
			nus, err := PreciseSymplecticSpectrum(BigFromMatrix(&v))
			if err != nil {
				t.Fatal(err)
			}
			checkSpectrum(t, "float64 comparison", nus, sp.Nu[:n], float64Tl)
			fe, err := Entropy(&v)
			if err != nil {
				t.Fatal(err)
			}
			pe, err := PreciseEntropy(BigFromMatrix(&v))
			if err != nil {
				t.Fatal(err)
			}
			if math.Abs(toFloat64(pe)-fe) > float64Tl*math.Max(1, fe) {
				t.Errorf("%d modes: precise entropy %.15g, float64 %.15g", n, toFloat64(pe), fe)
			}
		}
	}
}

func TestPreciseEntropyEdgeCases(t *testing.T) {
	// Source: physics.md, "Thermal state with mean photon number N: V = (2N+1) I; its entropy
	// is g(N)".
	for _, n := range []float64{0.25, 3, 1e6} {
		e, err := PreciseEntropy(BigFromMatrix(ptr(Thermal(n))))
		if err != nil {
			t.Fatal(err)
		}
		if d := relDiff(e, PreciseG(preciseF64(n))); d > identTol {
			t.Errorf("entropy of thermal(%g) off g by %g", n, d)
		}
	}
	// nu = 0.5 is unphysical (physics.md: V + i Omega >= 0 fails).
	half := Identity(6)
	half.Scale(0.5)
	if _, err := PreciseEntropy(BigFromMatrix(&half)); !errors.Is(err, ErrUnphysical) {
		t.Errorf("nu = 0.5: err %v, want ErrUnphysical", err)
	}
	// Not positive definite though det > 0 and Delta > 0 (Sylvester's criterion).
	bad := NewMatrix(4, 4)
	for k, v := range []float64{3, 3, -3, -3} {
		bad.Set(k, k, v)
	}
	if _, err := PreciseEntropy(BigFromMatrix(&bad)); !errors.Is(err, ErrUnphysical) {
		t.Errorf("indefinite two-mode matrix: err %v, want ErrUnphysical", err)
	}
	// A violation of 1e-6 beside a mode of size 1e25 is an error although 1e-30 max|V| = 1e-5
	// (PreciseUnphysicalCap; physics.md: "treat a larger violation as an error ... never
	// silently").
	big2 := NewMatrix(4, 4)
	for k, v := range []float64{1 - 1e-6, 1 - 1e-6, 1e25, 1e25} {
		big2.Set(k, k, v)
	}
	if _, err := PreciseEntropy(BigFromMatrix(&big2)); !errors.Is(err, ErrUnphysical) {
		t.Errorf("nu = 1 - 1e-6 beside 1e25: err %v, want ErrUnphysical", err)
	}
	// Tiny round-off below 1 is clamped: nu = 1 - 1e-40 on 1, 2 and 3 modes.
	for n := 1; n <= 3; n++ {
		v := BigIdentity(2 * n)
		f := newPrecise().Sub(preciseInt(1), parseRef(t, "1e-40"))
		for k := 0; k < 2*n; k++ {
			v.Set(k, k, f)
		}
		e, err := PreciseEntropy(v)
		if err != nil || e.Sign() != 0 {
			t.Errorf("%d modes at nu = 1 - 1e-40: entropy %v, err %v", n, e, err)
		}
	}
}

func ptr(m Matrix) *Matrix { return &m }

func TestPreciseDilations(t *testing.T) {
	inputs := []struct{ n, r, phi float64 }{{0.7, 0, 0}, {2, 0.4, 1.1}, {50, -0.2, -2.5}}
	models := []Model{
		{Kind: ThermalLoss, Eta: 0.37, NB: 2},
		{Kind: ThermalLoss, Eta: 0.9, NB: 0},
		{Kind: Amplifier, Gain: 3.3, NB: 0.1},
		{Kind: AdditiveNoise, Xi: 0.42},
	}
	for _, m := range models {
		pd, err := m.PreciseDilation()
		if err != nil {
			t.Fatal(err)
		}
		fd := m.Dilation()
		for _, in := range inputs {
			psi := PreciseSqueezedThermalPurification(in.n, in.r, in.phi)
			joint := pd.Joint(psi)
			// Against the float64 engine.
			fin := SqueezedThermalPurification(in.n, in.r, in.phi)
			var fj Matrix
			fd.Joint(&fin, &fj)
			pj := joint.Matrix()
			if d := pj.MaxAbsDiff(&fj); d > jointTol*fj.MaxAbs() {
				t.Errorf("%v, %+v: precise and float64 joint states differ by %g", m, in, d)
			}
			// The joint state is pure: all nu = 1 (Williamson; four modes, Jacobi path).
			nus, err := PreciseSymplecticSpectrum(joint)
			if err != nil {
				t.Fatal(err)
			}
			checkSpectrum(t, m.String()+" joint", nus, []float64{1, 1, 1, 1}, pureTol)
			// The channel's action on the input marginal (physics.md table): B = k V_A + y I
			// with (k, y) = (eta, (1-eta)(2N_B+1)), (G, (G-1)(2N_B+1)), (1, 2 xi), in big floats.
			va := psi.SelectModes([]int{1})
			vb := joint.SelectModes([]int{1})
			k, y := newPrecise(), newPrecise()
			nb := newPrecise().SetMantExp(preciseF64(m.NB), 1)
			nb.Add(nb, preciseInt(1))
			switch m.Kind {
			case ThermalLoss:
				k.SetFloat64(m.Eta)
				y.Sub(preciseInt(1), k)
				y.Mul(y, nb)
			case Amplifier:
				k.SetFloat64(m.Gain)
				y.Sub(k, preciseInt(1))
				y.Mul(y, nb)
			case AdditiveNoise:
				k.SetInt64(1)
				y.SetMantExp(preciseF64(m.Xi), 1)
			}
			for i := 0; i < 2; i++ {
				for j := 0; j < 2; j++ {
					want := newPrecise().Mul(k, va.At(i, j))
					if i == j {
						want.Add(want, y)
					}
					if d := absDiff(vb.At(i, j), want); d > identTol*va.MaxAbs() {
						t.Errorf("%v, %+v: B marginal (%d,%d) off the channel action by %g", m, in, i, j, d)
					}
				}
			}
		}
	}
}

func TestPreciseCPCertify(t *testing.T) {
	// Source for the expected margins: the Holevo-Werner criterion (Holevo, Werner, PRA 63,
	// 032312 (2001)); for X = sqrt(k) I, Y = y I on one mode, H = y I + i (1-k) Omega has
	// eigenvalues y +- |1-k|.
	loss := Model{Kind: ThermalLoss, Eta: 0.7, NB: 0.4}.Action()
	if m, err := PreciseCPCertify(&loss); err != nil || math.Abs(m-2*0.3*0.4) > actionTol {
		t.Errorf("thermal loss: margin %v, want 2(1-eta)N_B = 0.24 (err %v)", m, err)
	}
	amp := Model{Kind: Amplifier, Gain: 2, NB: 0.5}.Action()
	if m, err := PreciseCPCertify(&amp); err != nil || math.Abs(m-1) > actionTol {
		t.Errorf("amplifier: margin %v, want 2(G-1)N_B = 1 (err %v)", m, err)
	}
	// X = 2 I, Y = 0: an amplifier without noise is not CP; eigenvalues +-3.
	x2 := Identity(2)
	x2.Scale(2)
	noisy := Channel{In: 1, Out: 1, X: x2, Y: NewMatrix(2, 2)}
	if m, err := PreciseCPCertify(&noisy); err != nil || math.Abs(m+3) > exactMargin {
		t.Errorf("X = 2I, Y = 0: margin %v, want -3 (err %v)", m, err)
	}
	if _, _, err := PreciseNudgeCP(&noisy); err == nil {
		t.Errorf("PreciseNudgeCP accepted X = 2I, Y = 0")
	}

	rng := rand.New(rand.NewPCG(11, 12))
	// Thermal ancillas, as many as output modes: H = S_a (V_anc + i Omega) S_a^T > 0 (common
	// practice: a dilation with mixed ancillas is strictly inside the CP cone).
	s := randomBigSymplectic(rng, 4, 0.5).Matrix()
	anc := NewMatrix(4, 4)
	anc.SetBlock(0, 0, ptr(Thermal(0.3)))
	anc.SetBlock(2, 2, ptr(Thermal(0.6)))
	th := ChannelFromSymplectic(&s, 2, &anc, []int{0, 1})
	// V_anc + i Omega >= 2 min(N) I = 0.6 I, so the margin is at least 0.6 sigma_min(S_a)^2.
	sa := NewMatrix(4, 4)
	for i := 0; i < 4; i++ {
		for j := 0; j < 4; j++ {
			sa.Set(i, j, s.At(i, 4+j))
		}
	}
	var ssT Matrix
	ssT.MulTrans(&sa, &sa)
	var ev [4]float64
	SymmetricEigenvalues(&ssT, ev[:])
	lower := 0.6 * ev[0] * (1 - 1e-9)
	if m, err := PreciseCPCertify(&th); err != nil || !(m >= lower) || !(lower > 0) {
		t.Errorf("thermal-ancilla map: margin %v (err %v), want >= %g > 0", m, err, lower)
	}
	if got, _, err := PreciseNudgeCP(&th); err != nil || got.Y.MaxAbsDiff(&th.Y) != 0 {
		t.Errorf("PreciseNudgeCP changed a certified map (err %v)", err)
	}
	// A unitary (all outputs kept, vacuum ancilla): margin 0 up to the float64 round-off of
	// the entries (common practice: exact boundary).
	for trial := 0; trial < 5; trial++ {
		s3 := randomBigSymplectic(rng, 3, 0.5).Matrix()
		vac := Vacuum(1)
		u := ChannelFromSymplectic(&s3, 2, &vac, []int{0, 1, 2})
		m, err := PreciseCPCertify(&u)
		if err != nil || math.Abs(m) > boundaryTol {
			t.Errorf("unitary: margin %v, want about 0 (err %v)", m, err)
		}
		// Keeping 2 of 3 outputs is also on the boundary; the nudge makes it certifiable.
		part := ChannelFromSymplectic(&s3, 2, &vac, []int{2, 0})
		got, m2, err := PreciseNudgeCP(&part)
		if err != nil || !(m2 > 0) {
			t.Errorf("nudge: margin %v, err %v", m2, err)
			continue
		}
		if d := got.Y.MaxAbsDiff(&part.Y); d > nudgeTol*math.Max(1, part.Y.MaxAbs()) {
			t.Errorf("nudge moved Y by %g", d)
		}
	}
}

func BenchmarkPreciseEntropy4Modes(b *testing.B) {
	rng := rand.New(rand.NewPCG(13, 14))
	d := BigIdentity(8)
	for k := 0; k < 8; k++ {
		d.At(k, k).SetFloat64(float64(1 + k/2))
	}
	v := BigCongruence(randomBigSymplectic(rng, 4, 1), d)
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if _, err := PreciseEntropy(v); err != nil {
			b.Fatal(err)
		}
	}
}
