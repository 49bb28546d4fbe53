package filtertest_test

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/estbench/estbench/filters"
	"github.com/estbench/estbench/filters/filtertest"
)

// CV2D's process noise is the DWNA matrix of Bar-Shalom, Li & Kirubarajan
// 2001, "Estimation with Applications to Tracking and Navigation", §6.3.2,
// q·[[T⁴/4, T³/2], [T³/2, T²]] per axis with T = 1.
func TestCV2DMatrices(t *testing.T) {
	m := filtertest.CV2D(0.5, 4)
	want := []float64{
		0.125, 0.25, 0, 0,
		0.25, 0.5, 0, 0,
		0, 0, 0.125, 0.25,
		0, 0, 0.25, 0.5,
	}
	for i, v := range want {
		if m.Q[i] != v {
			t.Errorf("Q[%d] = %v, want %v", i, m.Q[i], v)
		}
	}
	if m.R[0] != 4 || m.R[3] != 4 || m.R[1] != 0 || m.R[2] != 0 {
		t.Errorf("R = %v, want diag(4, 4)", m.R)
	}
	// FMany/HMany agree with F/H on stacked states.
	x := []float64{1, 2, 3, 4, -5, 6, -7, 8}
	many, one := make([]float64, 8), make([]float64, 4)
	m.FMany(many, x, 1)
	for s := 0; s < 2; s++ {
		m.F(one, x[4*s:4*s+4], 1)
		for i := range one {
			if many[4*s+i] != one[i] {
				t.Errorf("FMany state %d [%d] = %v, F gives %v", s, i, many[4*s+i], one[i])
			}
		}
	}
	hm, h1 := make([]float64, 4), make([]float64, 2)
	m.HMany(hm, x, 1)
	for s := 0; s < 2; s++ {
		m.H(h1, x[4*s:4*s+4], 1)
		if hm[2*s] != h1[0] || hm[2*s+1] != h1[1] {
			t.Errorf("HMany state %d = %v, H gives %v", s, hm[2*s:2*s+2], h1)
		}
	}
}

// Simulate's noise has covariance Q (singular here) and R: with a zero
// transition the states are the noise itself. Each sample covariance entry
// must lie within 5 standard errors of the known-mean sample covariance,
// √((Σᵢⱼ² + Σᵢᵢ Σⱼⱼ)/N), since Var(xᵢxⱼ) = ΣᵢᵢΣⱼⱼ + Σᵢⱼ² for a zero-mean
// Gaussian (Isserlis 1918, "On a formula for the product-moment
// coefficient of any order of a normal frequency distribution in any
// number of variables", Biometrika 12; from memory). DWNA noise is Γv with
// Γ = [T²/2, T] per axis (Bar-Shalom et al. 2001 §6.3.2), so every draw
// has vx = 2 px.
func TestSimulateNoiseCovariance(t *testing.T) {
	base := filtertest.CV2D(0.5, 4)
	m := *base
	m.F = func(dst, _ []float64, _ int) {
		for i := range dst {
			dst[i] = 0
		}
	}
	m.H = func(dst, _ []float64, _ int) { dst[0], dst[1] = 0, 0 }
	const n = 20000
	truth, z := filtertest.Simulate(&m, make([]float64, 4), n, rand.New(rand.NewPCG(8, 9)))
	check := func(name string, rows [][]float64, want []float64, d int) {
		t.Helper()
		for i := 0; i < d; i++ {
			for j := 0; j < d; j++ {
				var s float64
				for _, r := range rows {
					s += r[i] * r[j]
				}
				got := s / n
				w := want[i*d+j]
				se := math.Sqrt((w*w + want[i*d+i]*want[j*d+j]) / n)
				if math.Abs(got-w) > 5*se+1e-15 {
					t.Errorf("%s[%d,%d]: sample %v, want %v (se %.3g)", name, i, j, got, w, se)
				}
			}
		}
	}
	check("Q", truth, m.Q, 4)
	check("R", z, m.R, 2)
	// Q has rank one per axis: vx = 2 px in every draw.
	for k, x := range truth[:100] {
		if math.Abs(x[1]-2*x[0]) > 1e-12*(1+math.Abs(x[1])) {
			t.Fatalf("step %d: draw %v is off the range of Q", k+1, x)
		}
	}
}

// With Model.RAt, Simulate draws the measurement noise of step k from
// N(0, R_k): whitened by the Cholesky factor of R_k (R_k = L Lᵀ, L⁻¹v ~
// N(0, I); the standard whitening transformation, common practice), the
// noise of CV2DVaryingR has identity covariance, within 5 standard errors
// as in TestSimulateNoiseCovariance (√(2/N) on the diagonal, √(1/N) off
// it). Unwhitened it does not: its variances range from 0.8 to 10.
func TestSimulateVaryingR(t *testing.T) {
	m := *filtertest.CV2DVaryingR(0.5, 4)
	m.F = func(dst, _ []float64, _ int) { clear(dst) }
	m.H = func(dst, _ []float64, _ int) { dst[0], dst[1] = 0, 0 }
	const n = 20000
	_, z := filtertest.Simulate(&m, make([]float64, 4), n, rand.New(rand.NewPCG(8, 10)))
	var s [4]float64
	var raw float64
	for k := 1; k <= n; k++ {
		r := filtertest.RAtOrR(&m, k)
		l00 := math.Sqrt(r[0])
		l10 := r[2] / l00
		l11 := math.Sqrt(r[3] - l10*l10)
		v := z[k-1]
		w0 := v[0] / l00
		w1 := (v[1] - l10*w0) / l11
		s[0] += w0 * w0
		s[1] += w0 * w1
		s[3] += w1 * w1
		raw += v[0] * v[0]
	}
	for i, want := range []float64{1, 0, 0, 1} {
		if i == 2 {
			continue
		}
		se := math.Sqrt((1 + want) / n)
		if got := s[i] / n; math.Abs(got-want) > 5*se {
			t.Errorf("whitened noise covariance [%d] = %v, want %v (se %.3g)", i, got, want, se)
		}
	}
	// Unwhitened, the first component's variance is a = 4·(0.2 + 0.3·(k
	// mod 5)) at the steps with RAt, mean 3.2, and 4 at the others (k mod 6
	// = 0; independent of k mod 5 over a period of 30): 3.2·5/6 + 4/6 =
	// 10/3, not R's 4. Within 0.2, about 6 standard errors of the mean of
	// v² (whose standard deviation is about √2·3.4).
	if got := raw / n; math.Abs(got-10.0/3) > 0.2 {
		t.Errorf("raw variance of the first component %v, want about 10/3", got)
	}
}

// The conformance checks pass for the reference filter itself.
func TestChecksOnKF(t *testing.T) {
	m := filtertest.CV2D(0.5, 4)
	x0, p0 := filtertest.CV2DPrior()
	f, err := filters.NewKF(m, filters.KFConfig{})
	if err != nil {
		t.Fatal(err)
	}
	filtertest.NoAllocs(t, f, m, x0, p0, nil)
	filtertest.HandlesMissing(t, f, m, x0, p0)
	filtertest.EqualsKF(t, func(m *filters.Model) filters.Filter {
		g, err := filters.NewKF(m, filters.KFConfig{})
		if err != nil {
			t.Fatal(err)
		}
		return g
	}, 0) // the same filter on the same data: bit-identical
	filtertest.EqualsKFVaryingR(t, func(m *filters.Model) filters.Filter {
		g, err := filters.NewKF(m, filters.KFConfig{})
		if err != nil {
			t.Fatal(err)
		}
		return g
	}, 0)
}
