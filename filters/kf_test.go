package filters_test

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
	"gonum.org/v1/gonum/mat"

	"github.com/estbench/estbench/filters"
	"github.com/estbench/estbench/filters/filtertest"
)

func newKF(t testing.TB, m *filters.Model) *filters.KF {
	t.Helper()
	f, err := filters.NewKF(m, filters.KFConfig{})
	if err != nil {
		t.Fatal(err)
	}
	return f
}

func TestKFNoAllocs(t *testing.T) {
	m := filtertest.CV2D(0.5, 4)
	x0, p0 := filtertest.CV2DPrior()
	filtertest.NoAllocs(t, newKF(t, m), m, x0, p0, nil)
}

func TestKFHandlesMissing(t *testing.T) {
	m := filtertest.CV2D(0.5, 4)
	x0, p0 := filtertest.CV2DPrior()
	filtertest.HandlesMissing(t, newKF(t, m), m, x0, p0)
}

// With FJac and HJac nil, KF differences F and H about the origin with unit
// step, which is exact for a linear model up to rounding (central
// differences are exact for affine maps; no external source needed).
func TestKFDifferencedEqualsAnalytic(t *testing.T) {
	filtertest.EqualsKF(t, func(m *filters.Model) filters.Filter {
		mm := *m
		mm.FJac, mm.HJac = nil, nil
		return newKF(t, &mm)
	}, 1e-12)
}

// cv1D is the one-axis constant-velocity model with discrete white noise
// acceleration of Bar-Shalom, Li & Kirubarajan 2001, "Estimation with
// Applications to Tracking and Navigation", §6.3.2: state [p, v],
// A = [[1, T], [0, 1]], Q = σv²·[[T⁴/4, T³/2], [T³/2, T²]], z = p + w,
// w ~ N(0, σw²).
func cv1D(T, sv, sw float64) *filters.Model {
	q := sv * sv
	return &filters.Model{
		Nx: 2, Nz: 1,
		F: func(dst, x []float64, _ int) {
			dst[0] = x[0] + T*x[1]
			dst[1] = x[1]
		},
		H:      func(dst, x []float64, _ int) { dst[0] = x[0] },
		FJac:   func(dst, _ []float64, _ int) { dst[0], dst[1], dst[2], dst[3] = 1, T, 0, 1 },
		HJac:   func(dst, _ []float64, _ int) { dst[0], dst[1] = 1, 0 },
		Q:      []float64{q * T * T * T * T / 4, q * T * T * T / 2, q * T * T * T / 2, q * T * T},
		R:      []float64{sw * sw},
		Linear: true,
	}
}

// runToSteadyState runs f with z = 0 (the gain does not depend on the data)
// until the predicted covariance stops changing, and returns the last
// predicted covariance and innovation variance S.
func runToSteadyState(t *testing.T, f *filters.KF, m *filters.Model, p0 []float64) (pPred, s []float64) {
	t.Helper()
	nx := m.Nx
	if err := f.Reset(make([]float64, nx), p0, nil); err != nil {
		t.Fatal(err)
	}
	z := make([]float64, m.Nz)
	x := make([]float64, nx)
	pPred, prev := make([]float64, nx*nx), make([]float64, nx*nx)
	nu, s := make([]float64, m.Nz), make([]float64, m.Nz*m.Nz)
	for k := 1; k <= 100000; k++ {
		if err := f.Predict(k); err != nil {
			t.Fatal(err)
		}
		f.EstimateTo(x, pPred)
		if err := f.Update(z, k); err != nil {
			t.Fatal(err)
		}
		if !f.InnovationTo(nu, s) {
			t.Fatal("no innovation after an update")
		}
		done := true
		for i := range pPred {
			if math.Abs(pPred[i]-prev[i]) > 1e-15*math.Abs(pPred[i]) {
				done = false
			}
		}
		if done {
			return pPred, s
		}
		copy(prev, pPred)
	}
	t.Fatal("the covariance did not converge")
	return nil, nil
}

// The steady-state gain of the KF on the DWNA constant-velocity model with
// position measurements is that of the α-β filter with
//
//	α = −(λ² + 8λ − (λ+4)√(λ²+8λ))/8,  β = (λ² + 4λ − λ√(λ²+8λ))/4,
//	K = [α, β/T],  λ = σv T²/σw (the tracking index),
//
// as given by Kalata 1984, "The tracking index: a generalized parameter
// for α-β and α-β-γ target trackers", IEEE TAES 20(2), and Bar-Shalom, Li
// & Kirubarajan 2001, §6.5 (formulas quoted from memory; they satisfy the
// Riccati fixed point, which this test checks them against). The gain is
// recovered as K = P⁻Cᵀ/S from the predicted covariance and S.
func TestKFSteadyStateAlphaBeta(t *testing.T) {
	const T, sw = 2.0, 3.0
	for _, lam := range []float64{0.1, 0.5, 1, 3, 10} {
		t.Run(fmt.Sprintf("lambda=%g", lam), func(t *testing.T) {
			sv := lam * sw / (T * T)
			m := cv1D(T, sv, sw)
			f := newKF(t, m)
			pPred, s := runToSteadyState(t, f, m, []float64{100, 0, 0, 10})
			r := math.Sqrt(lam*lam + 8*lam)
			alpha := -(lam*lam + 8*lam - (lam+4)*r) / 8
			beta := (lam*lam + 4*lam - lam*r) / 4
			if k0 := pPred[0] / s[0]; !scalar.EqualWithinAbsOrRel(k0, alpha, 1e-10, 1e-10) {
				t.Errorf("position gain %.15g, α = %.15g", k0, alpha)
			}
			if k1 := pPred[2] / s[0]; !scalar.EqualWithinAbsOrRel(k1, beta/T, 1e-10, 1e-10) {
				t.Errorf("velocity gain %.15g, β/T = %.15g", k1, beta/T)
			}
		})
	}
}

// The local level model x_k = x_{k-1} + η (var q), y = x + ε (var r)
// reaches the steady state with predicted variance P = (q + √(q²+4qr))/2
// and filtered variance P r/(P + r) (Durbin & Koopman 2012, "Time Series
// Analysis by State Space Methods", 2nd ed., §2.11; the root of
// P² − qP − qr = 0).
func TestKFLocalLevelSteadyState(t *testing.T) {
	for _, c := range []struct{ q, r float64 }{{1, 1}, {0.1, 10}, {10, 0.5}, {1e-3, 1}} {
		t.Run(fmt.Sprintf("q=%g/r=%g", c.q, c.r), func(t *testing.T) {
			m := &filters.Model{
				Nx: 1, Nz: 1,
				F:      func(dst, x []float64, _ int) { dst[0] = x[0] },
				H:      func(dst, x []float64, _ int) { dst[0] = x[0] },
				Q:      []float64{c.q},
				R:      []float64{c.r},
				Linear: true,
			}
			f := newKF(t, m)
			pPred, _ := runToSteadyState(t, f, m, []float64{1e4})
			want := (c.q + math.Sqrt(c.q*c.q+4*c.q*c.r)) / 2
			if !scalar.EqualWithinRel(pPred[0], want, 1e-10) {
				t.Errorf("predicted variance %.15g, want %.15g", pPred[0], want)
			}
			x, p := make([]float64, 1), make([]float64, 1)
			f.EstimateTo(x, p)
			if wf := want * c.r / (want + c.r); !scalar.EqualWithinRel(p[0], wf, 1e-10) {
				t.Errorf("filtered variance %.15g, want %.15g", p[0], wf)
			}
		})
	}
}

// LogLikelihood is the prediction error decomposition of the likelihood
// (Durbin & Koopman 2012, §7.2): it must equal the log-density of all the
// measurements taken jointly, z ~ N(μ, Σ) with μ_k = C Aᵏ m₀ and
// Σ_kl = C (Aᵏ P₀ Aˡᵀ + Σ_{j≤min(k,l)} Aᵏ⁻ʲ Q Aˡ⁻ʲᵀ) Cᵀ + δ_kl R, which is
// computed here directly with gonum v0.17.0's mat.Cholesky.
func TestKFLogLikelihoodJoint(t *testing.T) {
	m := filtertest.CV2D(0.5, 4)
	x0, p0 := filtertest.CV2DPrior()
	rng := rand.New(rand.NewPCG(99, 100))
	xt := make([]float64, 4)
	filtertest.Gaussian(xt, x0, p0, rng)
	const K = 8
	_, zs := filtertest.Simulate(m, xt, K, rng)
	zs[4] = nil // one missing measurement

	f := newKF(t, m)
	if err := f.Reset(x0, p0, nil); err != nil {
		t.Fatal(err)
	}
	for k := 1; k <= K; k++ {
		if err := f.Predict(k); err != nil {
			t.Fatal(err)
		}
		if err := f.Update(zs[k-1], k); err != nil {
			t.Fatal(err)
		}
	}

	A := mat.NewDense(4, 4, nil)
	m.FJac(A.RawMatrix().Data, nil, 0)
	C := mat.NewDense(2, 4, nil)
	m.HJac(C.RawMatrix().Data, nil, 0)
	Q := mat.NewDense(4, 4, m.Q)
	P0 := mat.NewDense(4, 4, p0)
	pow := make([]*mat.Dense, K+1) // pow[k] = Aᵏ
	pow[0] = mat.NewDense(4, 4, nil)
	for i := 0; i < 4; i++ {
		pow[0].Set(i, i, 1)
	}
	for k := 1; k <= K; k++ {
		pow[k] = mat.NewDense(4, 4, nil)
		pow[k].Mul(A, pow[k-1])
	}
	var steps []int
	for k := 1; k <= K; k++ {
		if zs[k-1] != nil {
			steps = append(steps, k)
		}
	}
	n := 2 * len(steps)
	mu := make([]float64, n)
	z := make([]float64, n)
	sigma := mat.NewSymDense(n, nil)
	m0 := mat.NewVecDense(4, x0)
	for a, k := range steps {
		var v, cv mat.VecDense
		v.MulVec(pow[k], m0)
		cv.MulVec(C, &v)
		mu[2*a], mu[2*a+1] = cv.AtVec(0), cv.AtVec(1)
		z[2*a], z[2*a+1] = zs[k-1][0], zs[k-1][1]
		for b, l := range steps {
			var cov, tmp mat.Dense
			tmp.Mul(pow[k], P0)
			cov.Mul(&tmp, pow[l].T())
			for j := 1; j <= min(k, l); j++ {
				var t1, t2 mat.Dense
				t1.Mul(pow[k-j], Q)
				t2.Mul(&t1, pow[l-j].T())
				cov.Add(&cov, &t2)
			}
			var zc, zz mat.Dense
			zc.Mul(C, &cov)
			zz.Mul(&zc, C.T())
			for i := 0; i < 2; i++ {
				for j := 0; j < 2; j++ {
					v := zz.At(i, j)
					if k == l {
						v += m.R[i*2+j]
					}
					if 2*a+i <= 2*b+j {
						sigma.SetSym(2*a+i, 2*b+j, v)
					}
				}
			}
		}
	}
	// log N(z; μ, Σ) = −½(n log 2π + log det Σ + (z−μ)ᵀ Σ⁻¹ (z−μ)), with
	// gonum's Cholesky.
	var chol mat.Cholesky
	if !chol.Factorize(sigma) {
		t.Fatal("joint covariance not positive definite")
	}
	d := mat.NewVecDense(n, nil)
	d.SubVec(mat.NewVecDense(n, z), mat.NewVecDense(n, mu))
	var sol mat.VecDense
	if err := chol.SolveVecTo(&sol, d); err != nil {
		t.Fatal(err)
	}
	want := -0.5 * (float64(n)*math.Log(2*math.Pi) + chol.LogDet() + mat.Dot(d, &sol))
	if got := f.LogLikelihood(); !scalar.EqualWithinAbsOrRel(got, want, 1e-9, 1e-9) {
		t.Errorf("LogLikelihood = %.15g, joint log-density %.15g", got, want)
	}
}

// A bearing innovation across ±π is wrapped: prediction −179°, measurement
// +179° gives −2°, not 358° (Model.AngleMeas contract). A linear model of
// the bearing alone: x = bearing, z = x + noise.
func TestKFAngleInnovationWrapped(t *testing.T) {
	deg := math.Pi / 180
	m := &filters.Model{
		Nx: 1, Nz: 1,
		F:         func(dst, x []float64, _ int) { dst[0] = x[0] },
		H:         func(dst, x []float64, _ int) { dst[0] = x[0] },
		Q:         []float64{1e-6},
		R:         []float64{1e-4},
		Linear:    true,
		AngleMeas: []int{0},
	}
	f := newKF(t, m)
	if err := f.Reset([]float64{-179 * deg}, []float64{1e-4}, nil); err != nil {
		t.Fatal(err)
	}
	if err := f.Predict(1); err != nil {
		t.Fatal(err)
	}
	if err := f.Update([]float64{179 * deg}, 1); err != nil {
		t.Fatal(err)
	}
	nu := make([]float64, 1)
	if !f.InnovationTo(nu, nil) {
		t.Fatal("no innovation")
	}
	if math.Abs(nu[0]-(-2*deg)) > 1e-12 {
		t.Errorf("innovation %v°, want -2°", nu[0]/deg)
	}
	x := make([]float64, 1)
	f.EstimateTo(x, nil)
	if !(x[0] < -179*deg) { // moved towards −181° ≡ +179°, the short way
		t.Errorf("estimate %v° did not move the short way round from -179°", x[0]/deg)
	}
}

// degenerateModel measures [px, 0] with R = 0, so the second component of
// S = C P Cᵀ + R is exactly zero: S is not positive definite.
func degenerateModel() *filters.Model {
	m := filtertest.CV2D(0.5, 4)
	m.H = func(dst, x []float64, _ int) { dst[0], dst[1] = x[0], 0 }
	m.HJac = func(dst, _ []float64, _ int) {
		copy(dst, []float64{1, 0, 0, 0, 0, 0, 0, 0})
	}
	m.HMany = nil
	m.R = []float64{0, 0, 0, 0}
	return m
}

// A singular S is reported as ErrNotPosDef, not a panic or NaN (package
// contract in doc.go), by every Gaussian filter.
func TestNotPosDefReturned(t *testing.T) {
	m := degenerateModel()
	x0, p0 := filtertest.CV2DPrior()
	ekf := newEKF(t, m, filters.EKFConfig{})
	ukf := newUKF(t, m, filters.UKFConfig{})
	for name, f := range map[string]filters.Filter{"kf": newKF(t, m), "ekf": ekf, "ukf": ukf} {
		if err := f.Reset(x0, p0, nil); err != nil {
			t.Fatal(err)
		}
		if err := f.Predict(1); err != nil {
			t.Fatalf("%s: Predict: %v", name, err)
		}
		if err := f.Update([]float64{1, 0}, 1); !errors.Is(err, filters.ErrNotPosDef) {
			t.Errorf("%s: Update with singular S returned %v, want ErrNotPosDef", name, err)
		}
		if f.(filters.Innovator).InnovationTo(make([]float64, 2), nil) {
			t.Errorf("%s: InnovationTo reports an innovation after a failed update", name)
		}
	}
	// The UKF needs a Cholesky factor of P itself.
	bad := append([]float64(nil), p0...)
	bad[5] = -1
	if err := ukf.Reset(x0, bad, nil); err != nil {
		t.Fatal(err)
	}
	if err := ukf.Predict(1); !errors.Is(err, filters.ErrNotPosDef) {
		t.Errorf("ukf: Predict with indefinite P returned %v, want ErrNotPosDef", err)
	}
}

func TestKFRejectsNonlinear(t *testing.T) {
	m := ctRangeBearing()
	if _, err := filters.NewKF(m, filters.KFConfig{}); err == nil {
		t.Error("NewKF accepted a model with Linear false")
	}
}
