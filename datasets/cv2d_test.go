package datasets

import (
	"math"
	"testing"
)

// Bar-Shalom, Li & Kirubarajan 2001, "Estimation with Applications to
// Tracking and Navigation", §6.3.2: the DWNA process noise per axis is
// Q = Γ σ_v² Γᵀ with Γ = [T²/2, T]ᵀ, i.e. σ_v² [[T⁴/4, T³/2], [T³/2, T²]],
// and the two axes are independent.
func TestCV2DProcessNoiseIsDWNA(t *testing.T) {
	for _, tc := range []struct {
		name  string
		cfg   CV2DConfig
		dt, q float64
	}{
		{"defaults", CV2DConfig{}, 1, 1},
		{"T=2,q=0.5", CV2DConfig{Dt: 2, Q: 0.5}, 2, 0.5},
		{"T=0.1,q=3", CV2DConfig{Dt: 0.1, Q: 3}, 0.1, 3},
	} {
		t.Run(tc.name, func(t *testing.T) {
			p, err := NewCV2D(tc.cfg)
			if err != nil {
				t.Fatal(err)
			}
			g := []float64{tc.dt * tc.dt / 2, tc.dt}
			for i := 0; i < 4; i++ {
				for j := 0; j < 4; j++ {
					want := 0.0
					if i/2 == j/2 {
						want = tc.q * g[i%2] * g[j%2]
					}
					if got := p.Model.Q[i*4+j]; !near(got, want, 0, 1e-15) {
						t.Errorf("Q[%d,%d] = %v, want %v", i, j, got, want)
					}
				}
			}
			if p.Dt != tc.dt {
				t.Errorf("Dt = %v, want %v", p.Dt, tc.dt)
			}
		})
	}
}

// Derivable property of the model: defaults as documented, and R = r I.
func TestCV2DDefaults(t *testing.T) {
	p, err := NewCV2D(CV2DConfig{})
	if err != nil {
		t.Fatal(err)
	}
	if p.Name != "cv2d" || p.Steps != 100 || p.Dt != 1 || !p.Model.Linear || !p.Traits.Linear {
		t.Fatalf("unexpected defaults: %+v", p)
	}
	if !sameBits(p.Model.R, []float64{100, 0, 0, 100}) {
		t.Fatalf("R = %v", p.Model.R)
	}
	if !sameBits(p.X0, []float64{0, 10, 0, 5}) || !sameBits(p.P0, diag(100, 25, 100, 25)) {
		t.Fatalf("prior %v %v", p.X0, p.P0)
	}
	if len(p.Scored) != 2 || p.Scored[0] != 0 || p.Scored[1] != 2 {
		t.Fatalf("Scored = %v", p.Scored)
	}
}

func TestCV2DConfigErrors(t *testing.T) {
	for _, cfg := range []CV2DConfig{
		{Q: -1}, {R: -1}, {Dt: -1}, {Steps: -1},
		{Q: math.NaN()}, {R: math.Inf(1)}, {Dt: math.NaN()},
	} {
		if _, err := NewCV2D(cfg); err == nil {
			t.Errorf("NewCV2D(%+v) gave no error", cfg)
		}
	}
}

// The model is linear (Bar-Shalom et al. 2001 §6.3.2): F(x) = A x and
// H(x) = C x with A, C the analytic Jacobians.
func TestCV2DLinearIdentity(t *testing.T) {
	p, _ := NewCV2D(CV2DConfig{Dt: 0.5})
	m := &p.Model
	x := []float64{3, -2, 7, 0.25}
	a, c := make([]float64, 16), make([]float64, 8)
	m.FJac(a, x, 1)
	m.HJac(c, x, 1)
	f, h := make([]float64, 4), make([]float64, 2)
	m.F(f, x, 1)
	m.H(h, x, 1)
	for i := 0; i < 4; i++ {
		var s float64
		for j := 0; j < 4; j++ {
			s += a[i*4+j] * x[j]
		}
		if s != f[i] {
			t.Fatalf("(A x)[%d] = %v, F = %v", i, s, f[i])
		}
	}
	for i := 0; i < 2; i++ {
		var s float64
		for j := 0; j < 4; j++ {
			s += c[i*4+j] * x[j]
		}
		if s != h[i] {
			t.Fatalf("(C x)[%d] = %v, H = %v", i, s, h[i])
		}
	}
	if !sameBits(f, []float64{3 - 1, -2, 7 + 0.125, 0.25}) {
		t.Fatalf("F = %v", f)
	}
}

// Closed form of constant-velocity motion (Bar-Shalom et al. 2001 §6.3.2 with
// σ_v = 0): the velocity never changes and p_k = p_0 + k T v.
func TestCV2DNoiseFreeStraightLine(t *testing.T) {
	p, _ := NewCV2D(CV2DConfig{Dt: 0.5})
	for i := range p.Model.Q {
		p.Model.Q[i] = 0 // before the first Run, which factors Q
	}
	var seq Sequence
	p.Run(&seq, newRNG(11, 12))
	x0 := seq.X0
	for k := 1; k <= seq.Steps; k++ {
		x := seq.State(k)
		if x[1] != x0[1] || x[3] != x0[3] {
			t.Fatalf("step %d: velocity changed: %v vs %v", k, x, x0)
		}
		tk := float64(k) * 0.5
		for _, c := range [][2]int{{0, 1}, {2, 3}} {
			want := x0[c[0]] + tk*x0[c[1]]
			if !near(x[c[0]], want, 1e-12, 1e-13) {
				t.Fatalf("step %d: position %v, want %v", k, x[c[0]], want)
			}
		}
	}
}

// Sampling check of SimulateAdditive against the model (Bar-Shalom et al.
// 2001 §6.3.2): the one-step noise w_k = x_k - F(x_{k-1}) has mean 0 and
// covariance Q, and z_k - H(x_k) has covariance R. Each sample moment is
// compared with its value within 5 standard errors, the standard error of a
// sample covariance of N independent Gaussian draws being
// √((Σ_ii Σ_jj + Σ_ij²)/N) (a textbook result; 5σ is common practice with no
// source, and the fixed seed makes the test deterministic).
func TestCV2DNoiseCovariance(t *testing.T) {
	const runs = 200 // × 100 steps = 20000 draws
	p, _ := NewCV2D(CV2DConfig{Dt: 0.5, Q: 2, R: 9})
	m := &p.Model
	var seq Sequence
	rng := newRNG(21, 22)
	var sw, sz [4]float64
	var sww [16]float64
	var szz [4]float64
	n := 0
	f, h := make([]float64, 4), make([]float64, 2)
	for r := 0; r < runs; r++ {
		p.Run(&seq, rng)
		prev := seq.X0
		for k := 1; k <= seq.Steps; k++ {
			x := seq.State(k)
			m.F(f, prev, k)
			m.H(h, x, k)
			z := seq.Meas(k)
			var w [4]float64
			for i := range w {
				w[i] = x[i] - f[i]
				sw[i] += w[i]
			}
			for i := 0; i < 4; i++ {
				for j := 0; j < 4; j++ {
					sww[i*4+j] += w[i] * w[j]
				}
			}
			v := [2]float64{z[0] - h[0], z[1] - h[1]}
			for i := 0; i < 2; i++ {
				sz[i] += v[i]
				for j := 0; j < 2; j++ {
					szz[i*2+j] += v[i] * v[j]
				}
			}
			n++
			prev = x
		}
	}
	N := float64(n)
	check := func(what string, sum, sq []float64, sigma []float64, d int) {
		t.Helper()
		for i := 0; i < d; i++ {
			if se := math.Sqrt(sigma[i*d+i] / N); math.Abs(sum[i]/N) > 5*se {
				t.Errorf("%s mean[%d] = %v, more than 5 standard errors (%v) from 0", what, i, sum[i]/N, se)
			}
			for j := 0; j < d; j++ {
				want := sigma[i*d+j]
				se := math.Sqrt((sigma[i*d+i]*sigma[j*d+j] + want*want) / N)
				if got := sq[i*d+j] / N; math.Abs(got-want) > 5*se {
					t.Errorf("%s cov[%d,%d] = %v, want %v ± %v", what, i, j, got, want, 5*se)
				}
			}
		}
	}
	check("process noise", sw[:], sww[:], m.Q, 4)
	check("measurement noise", sz[:2], szz[:], m.R, 2)
}

// Sampling check of the prior draw: x0 ~ N(X0, P0) (the Problem contract),
// with the same 5-standard-error rule as above.
func TestCV2DInitialStateDraw(t *testing.T) {
	const runs = 20000
	p, _ := NewCV2D(CV2DConfig{Steps: 1})
	var seq Sequence
	rng := newRNG(31, 32)
	var s, ss [4]float64
	for r := 0; r < runs; r++ {
		p.Run(&seq, rng)
		for i, v := range seq.X0 {
			d := v - p.X0[i]
			s[i] += d
			ss[i] += d * d
		}
	}
	for i := 0; i < 4; i++ {
		v := p.P0[i*4+i]
		if se := math.Sqrt(v / runs); math.Abs(s[i]/runs) > 5*se {
			t.Errorf("x0 mean[%d] off by %v (se %v)", i, s[i]/runs, se)
		}
		if se := v * math.Sqrt(2.0/runs); math.Abs(ss[i]/runs-v) > 5*se {
			t.Errorf("x0 var[%d] = %v, want %v ± %v", i, ss[i]/runs, v, 5*se)
		}
	}
}
