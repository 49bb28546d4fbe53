package filters_test

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"

	"github.com/estbench/estbench/filters"
	"github.com/estbench/estbench/filters/filtertest"
)

func newIEKF(t testing.TB, m *filters.Model, cfg filters.IEKFConfig) *filters.IEKF {
	t.Helper()
	f, err := filters.NewIEKF(m, cfg)
	if err != nil {
		t.Fatal(err)
	}
	return f
}

// On a linear model the Gauss-Newton cost is quadratic, so the first
// iterate is its minimum and the IEKF is the Kalman filter (Bell & Cathey
// 1993, "The iterated Kalman filter update as a Gauss-Newton method": one
// Gauss-Newton step solves a linear least-squares problem).
func TestIEKFEqualsKF(t *testing.T) {
	filtertest.EqualsKF(t, func(m *filters.Model) filters.Filter {
		return newIEKF(t, m, filters.IEKFConfig{})
	}, 1e-9)
	filtertest.EqualsKF(t, func(m *filters.Model) filters.Filter {
		mm := *m
		mm.FJac, mm.HJac = nil, nil
		return newIEKF(t, &mm, filters.IEKFConfig{})
	}, 1e-7) // differenced Jacobians, as TestEKFDifferencedEqualsKF
}

func TestIEKFNoAllocs(t *testing.T) {
	ct := ctRangeBearing()
	cx, cp := ctPrior()
	filtertest.NoAllocs(t, newIEKF(t, ct, filters.IEKFConfig{}), ct, cx, cp, nil)
	num := *ct
	num.FJac, num.HJac = nil, nil
	filtertest.NoAllocs(t, newIEKF(t, &num, filters.IEKFConfig{}), &num, cx, cp, nil)
	filtertest.HandlesMissing(t, newIEKF(t, ct, filters.IEKFConfig{}), ct, cx, cp)
}

// With one iteration the update is the EKF's (Bell & Cathey 1993: the
// first Gauss-Newton step from the prediction is the EKF update); the
// arithmetic is the same, so the two agree to rounding on the nonlinear
// range-bearing model over 100 steps.
func TestIEKFOneIterationIsEKF(t *testing.T) {
	m := ctRangeBearing()
	x0, p0 := ctPrior()
	rng := rand.New(rand.NewPCG(5, 55))
	xt := make([]float64, 5)
	filtertest.Gaussian(xt, x0, p0, rng)
	_, zs := filtertest.Simulate(m, xt, 100, rng)
	compareFilters(t, newIEKF(t, m, filters.IEKFConfig{MaxIter: 1}), newEKF(t, m, filters.EKFConfig{}), m, x0, p0, zs, 1e-14)
}

// The converged IEKF update is a stationary point of the MAP cost
// J(x) = ½|z − H(x)|²_R⁻¹ + ½|x − x̄|²_P̄⁻¹ (Bell & Cathey 1993: the
// Gauss-Newton fixed point), i.e. P̄⁻¹(x − x̄) = Cᵀ R⁻¹ (z − H(x)) with
// C = H'(x); it costs less than the EKF's update, which is one step. The
// scenario (ours): a launch 50 m from the radar with 10 m position spread,
// so range and bearing are strongly nonlinear over the prior, and a
// measurement 5 m short and 0.1 rad off the predicted one.
func TestIEKFStationary(t *testing.T) {
	m := ctRangeBearing()
	x0 := []float64{30, 0, 40, 0, 0}
	p0 := []float64{
		100, 0, 0, 0, 0,
		0, 1, 0, 0, 0,
		0, 0, 100, 0, 0,
		0, 0, 0, 1, 0,
		0, 0, 0, 0, 1e-4,
	}
	z := []float64{45, math.Atan2(40, 30) + 0.1}
	f := newIEKF(t, m, filters.IEKFConfig{MaxIter: 50, Tol: 1e-13})
	e := newEKF(t, m, filters.EKFConfig{})
	xbar, pbar := make([]float64, 5), make([]float64, 25)
	for i, g := range []filters.Filter{f, e} {
		if err := g.Reset(x0, p0, nil); err != nil {
			t.Fatal(err)
		}
		if err := g.Predict(1); err != nil {
			t.Fatal(err)
		}
		if i == 0 {
			g.EstimateTo(xbar, pbar)
		}
		if err := g.Update(z, 1); err != nil {
			t.Fatal(err)
		}
	}
	xi, xe := make([]float64, 5), make([]float64, 5)
	f.EstimateTo(xi, nil)
	e.EstimateTo(xe, nil)
	if it := f.Iterations(); it < 3 || it >= 50 {
		t.Errorf("%d iterations: want convergence in more than two and fewer than 50", it)
	}
	var pInv mat.Dense
	if err := pInv.Inverse(mat.NewDense(5, 5, pbar)); err != nil {
		t.Fatal(err)
	}
	rInv := []float64{1 / m.R[0], 1 / m.R[3]}
	cost := func(x []float64) float64 {
		h := make([]float64, 2)
		m.H(h, x, 1)
		r := []float64{z[0] - h[0], filters.WrapAngle(z[1] - h[1])}
		d := mat.NewVecDense(5, nil)
		d.SubVec(mat.NewVecDense(5, x), mat.NewVecDense(5, xbar))
		return 0.5*(r[0]*r[0]*rInv[0]+r[1]*r[1]*rInv[1]) + 0.5*mat.Inner(d, &pInv, d)
	}
	// Gradient: P̄⁻¹(x − x̄) − Cᵀ R⁻¹ r, against the size of its two terms.
	h, c := make([]float64, 2), make([]float64, 10)
	m.H(h, xi, 1)
	m.HJac(c, xi, 1)
	r := []float64{(z[0] - h[0]) * rInv[0], filters.WrapAngle(z[1]-h[1]) * rInv[1]}
	d := make([]float64, 5)
	for i := range d {
		d[i] = xi[i] - xbar[i]
	}
	var g mat.VecDense
	g.MulVec(&pInv, mat.NewVecDense(5, d))
	var gNorm, scale float64
	for i := 0; i < 5; i++ {
		ct := c[i]*r[0] + c[5+i]*r[1]
		gNorm = math.Hypot(gNorm, g.AtVec(i)-ct)
		scale = math.Hypot(scale, ct)
	}
	if gNorm > 1e-8*scale {
		t.Errorf("gradient of the MAP cost at the IEKF update %.3g (terms of size %.3g)", gNorm, scale)
	}
	ji, je := cost(xi), cost(xe)
	t.Logf("cost at IEKF %.6g, at EKF %.6g; gradient %.3g of %.3g; %d iterations", ji, je, gNorm, scale, f.Iterations())
	if !(ji < je) {
		t.Errorf("MAP cost at the IEKF update %.6g not below the EKF's %.6g", ji, je)
	}
	// The reported innovation is the prediction's, as the EKF's.
	ni, ne := make([]float64, 2), make([]float64, 2)
	si, se := make([]float64, 4), make([]float64, 4)
	f.InnovationTo(ni, si)
	e.InnovationTo(ne, se)
	for i := range ni {
		if math.Abs(ni[i]-ne[i]) > 1e-12*max(1, math.Abs(ne[i])) {
			t.Errorf("innovation[%d] %.17g, EKF %.17g", i, ni[i], ne[i])
		}
	}
	for i := range si {
		if math.Abs(si[i]-se[i]) > 1e-12*math.Abs(se[i]) {
			t.Errorf("S[%d] %.17g, EKF %.17g", i, si[i], se[i])
		}
	}
}

func TestIEKFConfigErrors(t *testing.T) {
	m := ctRangeBearing()
	for _, bad := range []filters.IEKFConfig{{MaxIter: -1}, {Tol: -1}, {Step: -1}, {Jitter: -1}} {
		if _, err := filters.NewIEKF(m, bad); err == nil {
			t.Errorf("NewIEKF(%+v) accepted an invalid config", bad)
		}
	}
	nm := filtertest.CV2D(0.5, 4)
	nm.Nv = 2
	nm.HV = func(dst, x, v []float64, k int) {}
	if _, err := filters.NewIEKF(nm, filters.IEKFConfig{}); err == nil {
		t.Error("NewIEKF accepted a model with HV")
	}
}
