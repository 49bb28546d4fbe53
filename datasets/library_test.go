package datasets

import (
	"math"
	"testing"
)

// The problems of the library beyond the first three, in their default and
// other notable configurations, for the contract checks below (the first
// three are covered by problem_test.go).
var libraryProblems = []struct {
	name  string
	build func() (*Problem, error)
}{
	{"bearings", func() (*Problem, error) { return NewBearings(BearingsConfig{}) }},
	{"bearings/draw", func() (*Problem, error) { return NewBearings(BearingsConfig{DrawStart: true}) }},
	{"reentry", func() (*Problem, error) { return NewReentry(ReentryConfig{Steps: 300}) }},
	{"pendulum", func() (*Problem, error) { return NewPendulum(PendulumConfig{}) }},
	{"pendulum/rk4", func() (*Problem, error) { return NewPendulum(PendulumConfig{RK4: true}) }},
	{"lorenz63", func() (*Problem, error) { return NewLorenz63(Lorenz63Config{}) }},
	{"lorenz63/xz", func() (*Problem, error) { return NewLorenz63(Lorenz63Config{Observe: "xz"}) }},
	{"lorenz96", func() (*Problem, error) { return NewLorenz96(Lorenz96Config{}) }},
	{"stochvol", func() (*Problem, error) { return NewStochVol(StochVolConfig{}) }},
	{"stochvol/logsq", func() (*Problem, error) { return NewStochVol(StochVolConfig{LogSquared: true}) }},
	{"friction", func() (*Problem, error) { return NewFriction(FrictionConfig{}) }},
	{"multnoise", func() (*Problem, error) { return NewRicker(RickerConfig{}) }},
	{"heavytail", func() (*Problem, error) { return NewHeavyTail(HeavyTailConfig{}) }},
	{"heavytail/t", func() (*Problem, error) { return NewHeavyTail(HeavyTailConfig{Noise: "t", Nu: 2.5}) }},
	{"quantised", func() (*Problem, error) { return NewQuantised(QuantisedConfig{}) }},
}

// Simulate contract (doc.go): a run depends only on its random stream, a
// fresh problem gives the same run, and another stream gives another run.
func TestLibraryRunDeterministic(t *testing.T) {
	for _, tc := range libraryProblems {
		t.Run(tc.name, func(t *testing.T) {
			p := mustBuild(t, tc.build)
			var a, b, c Sequence
			p.Run(&a, newRNG(1, 2))
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
				z := a.Meas(k)
				if z == nil {
					t.Fatalf("step %d has no measurement", k)
				}
				for i, v := range z {
					if math.IsNaN(v) || math.IsInf(v, 0) {
						t.Fatalf("step %d: measurement %d = %v", k, i, v)
					}
				}
				if !near(a.T[k-1], float64(k)*p.Dt, 0, 1e-15) {
					t.Fatalf("T[%d] = %v, want %v", k-1, a.T[k-1], float64(k)*p.Dt)
				}
			}
		})
	}
}

// Memory contract of doc.go: Run reuses the Sequence buffers.
func TestLibraryRunAllocatesNothing(t *testing.T) {
	for _, tc := range libraryProblems {
		t.Run(tc.name, func(t *testing.T) {
			p := mustBuild(t, tc.build)
			var seq Sequence
			rng := newRNG(7, 7)
			p.Run(&seq, rng)
			if n := testing.AllocsPerRun(5, func() { p.Run(&seq, rng) }); n != 0 {
				t.Fatalf("Run allocates %v times per call after the first", n)
			}
		})
	}
}

// Model contract (filters.Model): FMany/HMany apply F/H to each state; FW
// and HV with zero noise equal F and H; Q and R have the noise dimensions;
// a problem that lacks a trait says why in its own words.
func TestLibraryModelContract(t *testing.T) {
	for _, tc := range libraryProblems {
		t.Run(tc.name, func(t *testing.T) {
			p := mustBuild(t, tc.build)
			m := &p.Model
			nx, nz := m.Nx, m.Nz
			states := sampleStates(p, 9)
			n := len(states) / nx
			fm, hm := make([]float64, n*nx), make([]float64, n*nz)
			f1, h1 := make([]float64, nx), make([]float64, nz)
			for _, k := range []int{1, 2, 37} {
				m.FMany(fm, states, k)
				m.HMany(hm, states, k)
				for i := 0; i < n; i++ {
					x := states[i*nx : (i+1)*nx]
					m.F(f1, x, k)
					m.H(h1, x, k)
					if !sameBits(f1, fm[i*nx:(i+1)*nx]) || !sameBits(h1, hm[i*nz:(i+1)*nz]) {
						t.Fatalf("k=%d state %d: batch differs from single", k, i)
					}
					if m.FW != nil {
						w := make([]float64, m.Nw)
						fw := make([]float64, nx)
						m.FW(fw, x, w, k)
						if !sameBits(fw, f1) {
							t.Fatalf("FW(x, 0) = %v, F(x) = %v", fw, f1)
						}
					}
					if m.HV != nil {
						v := make([]float64, m.Nv)
						hv := make([]float64, nz)
						m.HV(hv, x, v, k)
						if !sameBits(hv, h1) {
							t.Fatalf("HV(x, 0) = %v, H(x) = %v", hv, h1)
						}
					}
				}
			}
			nw, nv := nx, nz
			if m.FW != nil {
				nw = m.Nw
			}
			if m.HV != nil {
				nv = m.Nv
			}
			if len(m.Q) != nw*nw || len(m.R) != nv*nv || len(p.X0) != nx || len(p.P0) != nx*nx {
				t.Fatalf("sizes: Q %d R %d X0 %d P0 %d", len(m.Q), len(m.R), len(p.X0), len(p.P0))
			}
			tr := p.Traits
			if tr.AdditiveNoise != m.Additive() || tr.Linear != m.Linear {
				t.Fatalf("traits %+v disagree with the model (additive %v, linear %v)", tr, m.Additive(), m.Linear)
			}
			if (!tr.Differentiable && tr.NonDifferentiable == "") || (!tr.AdditiveNoise && tr.NonAdditive == "") ||
				(!tr.GaussianNoise && tr.NonGaussian == "") {
				t.Fatalf("a missing trait has no reason: %+v", tr)
			}
			if (tr.Differentiable && tr.NonDifferentiable != "") || (tr.AdditiveNoise && tr.NonAdditive != "") ||
				(tr.GaussianNoise && tr.NonGaussian != "") {
				t.Fatalf("a trait that holds has a reason against it: %+v", tr)
			}
			if tr.AnalyticJacobians != (m.FJac != nil && m.HJac != nil) {
				t.Fatalf("AnalyticJacobians %v but FJac, HJac set: %v, %v", tr.AnalyticJacobians, m.FJac != nil, m.HJac != nil)
			}
			if !tr.GaussianNoise && m.MeasLogLik == nil {
				t.Fatal("non-Gaussian problem without MeasLogLik")
			}
			for _, j := range p.Scored {
				if j < 0 || j >= nx {
					t.Fatalf("scored component %d out of range", j)
				}
			}
		})
	}
}

// Derivative check (derivable property): where a problem is differentiable
// and has analytic Jacobians, they agree with central differences of F and
// H at states spread around the prior, for states and steps where the
// model is smooth. Central differences with step 1e-6 max(1, |x|) have
// truncation and rounding error well below the tolerance used.
func TestLibraryJacobians(t *testing.T) {
	for _, tc := range libraryProblems {
		t.Run(tc.name, func(t *testing.T) {
			p := mustBuild(t, tc.build)
			m := &p.Model
			if !p.Traits.AnalyticJacobians || !p.Traits.Differentiable {
				t.Skip("no analytic Jacobian of a differentiable model")
			}
			nx, nz := m.Nx, m.Nz
			states := sampleStates(p, 5)
			fj, hj := make([]float64, nx*nx), make([]float64, nz*nx)
			for i := 0; i+nx <= len(states); i += nx {
				x := states[i : i+nx]
				for _, k := range []int{1, 17} {
					m.FJac(fj, x, k)
					m.HJac(hj, x, k)
					nf := centralJac(m.F, x, nx, k)
					nh := centralJac(m.H, x, nz, k)
					scale := 0.0
					for _, v := range nf {
						scale = math.Max(scale, math.Abs(v))
					}
					for j := range fj {
						if !near(fj[j], nf[j], 1e-6*scale, 1e-5) {
							t.Fatalf("x=%v k=%d: FJac[%d,%d] = %v, differences %v", x, k, j/nx, j%nx, fj[j], nf[j])
						}
					}
					for j := range hj {
						if !near(hj[j], nh[j], 1e-7, 1e-5) {
							t.Fatalf("x=%v k=%d: HJac[%d,%d] = %v, differences %v", x, k, j/nx, j%nx, hj[j], nh[j])
						}
					}
				}
			}
		})
	}
}

// sampleStates returns n states stored one after another: the prior mean
// and draws from the prior, kept physically meaningful where the model
// needs it.
func sampleStates(p *Problem, n int) []float64 {
	nx := p.Model.Nx
	rng := newRNG(3, 4)
	x := make([]float64, n*nx)
	l := cholOrZero(p.P0, nx)
	w := make([]float64, nx)
	copy(x, p.X0)
	for i := 1; i < n; i++ {
		addGaussian(x[i*nx:(i+1)*nx], p.X0, l, w, rng)
		if p.Name == "multnoise" {
			x[i*nx] = math.Abs(x[i*nx]) + 0.5*float64(i)
		}
	}
	return x
}

func BenchmarkLibraryRun(b *testing.B) {
	for _, tc := range libraryProblems {
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
