package datasets

import (
	"math"
	"math/rand/v2"
	"testing"
)

// builders of every problem in this package, with default configurations.
var allProblems = []struct {
	name  string
	build func() (*Problem, error)
}{
	{"cv2d", func() (*Problem, error) { return NewCV2D(CV2DConfig{}) }},
	{"ungm", func() (*Problem, error) { return NewUNGM(UNGMConfig{}) }},
	{"ctrb", func() (*Problem, error) { return NewCTRB(CTRBConfig{}) }},
}

func mustBuild(t testing.TB, build func() (*Problem, error)) *Problem {
	t.Helper()
	p, err := build()
	if err != nil {
		t.Fatal(err)
	}
	return p
}

func newRNG(a, b uint64) *rand.Rand { return rand.New(rand.NewPCG(a, b)) }

// near reports whether got is within abs or rel*|want| of want.
func near(got, want, abs, rel float64) bool {
	d := math.Abs(got - want)
	return d <= abs || d <= rel*math.Abs(want)
}

// sameBits reports whether two slices are bit-for-bit identical.
func sameBits(a, b []float64) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if math.Float64bits(a[i]) != math.Float64bits(b[i]) {
			return false
		}
	}
	return true
}

// centralJac returns the central-difference Jacobian (ny x nx, row-major) of
// g at x with step h_i = 1e-6 max(1, |x_i|).
func centralJac(g func(dst, x []float64, k int), x []float64, ny, k int) []float64 {
	nx := len(x)
	j := make([]float64, ny*nx)
	xt := append([]float64(nil), x...)
	fp, fm := make([]float64, ny), make([]float64, ny)
	for c := 0; c < nx; c++ {
		h := 1e-6 * math.Max(1, math.Abs(x[c]))
		xt[c] = x[c] + h
		g(fp, xt, k)
		xt[c] = x[c] - h
		g(fm, xt, k)
		xt[c] = x[c]
		for r := 0; r < ny; r++ {
			j[r*nx+c] = (fp[r] - fm[r]) / (2 * h)
		}
	}
	return j
}

// Derivable property of the simulator (the source is the Simulate contract
// in doc.go): a run depends only on its random stream.
func TestRunDeterministic(t *testing.T) {
	for _, tc := range allProblems {
		t.Run(tc.name, func(t *testing.T) {
			p := mustBuild(t, tc.build)
			var a, b, c Sequence
			p.Run(&a, newRNG(1, 2))
			// A second, separately built problem with the same stream.
			mustBuild(t, tc.build).Run(&b, newRNG(1, 2))
			p.Run(&c, newRNG(1, 3))
			for _, s := range [][2][]float64{{a.X0, b.X0}, {a.Truth, b.Truth}, {a.Z, b.Z}, {a.T, b.T}} {
				if !sameBits(s[0], s[1]) {
					t.Fatal("same seed gave different sequences")
				}
			}
			if sameBits(a.Truth, c.Truth) || sameBits(a.Z, c.Z) {
				t.Fatal("different seeds gave the same sequence")
			}
			if a.Steps != p.Steps || a.Nx != p.Model.Nx || a.Nz != p.Model.Nz {
				t.Fatalf("sequence dims %d,%d,%d", a.Steps, a.Nx, a.Nz)
			}
			for k := 1; k <= a.Steps; k++ {
				if a.Meas(k) == nil {
					t.Fatalf("step %d has no measurement", k)
				}
				if a.T[k-1] != float64(k)*p.Dt {
					t.Fatalf("T[%d] = %v", k-1, a.T[k-1])
				}
			}
		})
	}
}

// Memory contract of doc.go: Run reuses the Sequence buffers.
func TestRunAllocatesNothing(t *testing.T) {
	for _, tc := range allProblems {
		t.Run(tc.name, func(t *testing.T) {
			p := mustBuild(t, tc.build)
			var seq Sequence
			rng := newRNG(7, 7)
			p.Run(&seq, rng)
			if n := testing.AllocsPerRun(20, func() { p.Run(&seq, rng) }); n != 0 {
				t.Fatalf("Run allocates %v times per call after the first", n)
			}
		})
	}
}

// Model contract (filters.Model): FMany/HMany apply F/H to each state.
func TestBatchEqualsSingle(t *testing.T) {
	rng := newRNG(3, 4)
	for _, tc := range allProblems {
		t.Run(tc.name, func(t *testing.T) {
			p := mustBuild(t, tc.build)
			m := &p.Model
			nx, nz := m.Nx, m.Nz
			const n = 9
			x := make([]float64, n*nx)
			for i := range x {
				x[i] = p.X0[i%nx] + 50*rng.NormFloat64()*math.Sqrt(p.P0[(i%nx)*nx+i%nx])
			}
			if tc.name == "ctrb" { // turn rates at and around the series switch
				for i, w := range []float64{0, 1e-12, -1e-12, 0.1, math.Nextafter(0.1, 0), -0.1, 0.05, -0.5, 2} {
					x[i*nx+4] = w
				}
			}
			fm, hm := make([]float64, n*nx), make([]float64, n*nz)
			f1, h1 := make([]float64, nx), make([]float64, nz)
			for _, k := range []int{1, 2, 37} {
				m.FMany(fm, x, k)
				m.HMany(hm, x, k)
				for i := 0; i < n; i++ {
					m.F(f1, x[i*nx:(i+1)*nx], k)
					m.H(h1, x[i*nx:(i+1)*nx], k)
					if !sameBits(f1, fm[i*nx:(i+1)*nx]) || !sameBits(h1, hm[i*nz:(i+1)*nz]) {
						t.Fatalf("k=%d state %d: batch differs from single", k, i)
					}
				}
			}
		})
	}
}

// Every constructor call returns an independent problem (the runner builds
// one per worker).
func TestProblemsIndependent(t *testing.T) {
	for _, tc := range allProblems {
		t.Run(tc.name, func(t *testing.T) {
			a, b := mustBuild(t, tc.build), mustBuild(t, tc.build)
			q, r := b.Model.Q[0], b.Model.R[0]
			x0, p0 := b.X0[0], b.P0[0]
			a.Model.Q[0], a.Model.R[0], a.X0[0], a.P0[0] = -1, -1, -1, -1
			a.Scored[0] = -1
			if b.Model.Q[0] != q || b.Model.R[0] != r || b.X0[0] != x0 || b.P0[0] != p0 || b.Scored[0] < 0 {
				t.Fatal("two problems share storage")
			}
		})
	}
}

// Derivable property: L Lᵀ reproduces a rank-deficient covariance (the
// cv2d process noise, rank one per axis) and its null pivots give zero
// columns rather than rounding noise.
func TestCholOrZeroSingular(t *testing.T) {
	for _, dt := range []float64{0.1, 0.3, 1, 2.5} {
		p, err := NewCV2D(CV2DConfig{Dt: dt, Q: 0.7})
		if err != nil {
			t.Fatal(err)
		}
		q := p.Model.Q
		l := cholOrZero(q, 4)
		for i := 0; i < 4; i++ {
			for j := 0; j < 4; j++ {
				var s float64
				for k := 0; k < 4; k++ {
					s += l[i*4+k] * l[j*4+k]
				}
				if !near(s, q[i*4+j], 1e-15*q[5], 1e-12) {
					t.Fatalf("dt=%v: (L Lᵀ)[%d,%d] = %v, want %v", dt, i, j, s, q[i*4+j])
				}
			}
		}
		for _, c := range []int{1, 3} {
			for i := 0; i < 4; i++ {
				if l[i*4+c] != 0 {
					t.Fatalf("dt=%v: column %d of L not zero: %v", dt, c, l)
				}
			}
		}
	}
}

// Derivable property: wrapPi maps onto (-π, π] and changes angles by whole
// turns only.
func TestWrapPi(t *testing.T) {
	for _, a := range []float64{0, 1, -1, math.Pi, -math.Pi, 3.5, -3.5, 7, -7, 100, -100, 1e6} {
		w := wrapPi(a)
		if !(w > -math.Pi && w <= math.Pi) {
			t.Fatalf("wrapPi(%v) = %v out of (-π, π]", a, w)
		}
		turns := (a - w) / (2 * math.Pi)
		if !near(turns, math.Round(turns), 1e-9, 0) {
			t.Fatalf("wrapPi(%v) = %v is not a whole number of turns away", a, w)
		}
	}
	if wrapPi(-math.Pi) != math.Pi {
		t.Fatalf("wrapPi(-π) = %v, want π", wrapPi(-math.Pi))
	}
}

func TestSequenceResizeReuses(t *testing.T) {
	var s Sequence
	s.Resize(4, 2, 100)
	truth := &s.Truth[0]
	s.Resize(4, 2, 50)
	if &s.Truth[0] != truth || len(s.Truth) != 200 || len(s.Has) != 50 {
		t.Fatal("Resize to a smaller size did not reuse the buffers")
	}
}

func BenchmarkRun(b *testing.B) {
	for _, tc := range allProblems {
		b.Run("problem="+tc.name, func(b *testing.B) {
			p := mustBuild(b, tc.build)
			var seq Sequence
			rng := newRNG(1, 1)
			p.Run(&seq, rng)
			b.ReportAllocs()
			for b.Loop() {
				p.Run(&seq, rng)
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*p.Steps), "ns/step")
		})
	}
}
