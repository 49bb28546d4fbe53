package bench

import (
	"math/rand/v2"
	"testing"

	"github.com/estbench/estbench/datasets"
	"github.com/estbench/estbench/filters"
)

// The harness's count of model evaluations per step equals what each
// method's definition calls for, on problems where every step has a
// measurement and the model has analytic Jacobians and batch functions:
//
//   - kf and ekf: the mean through F and the predicted measurement through
//     H once each, and the Jacobians A = FJac and C = HJac once each: 4
//     (Kalman 1960; Jazwinski 1970; Bar-Shalom, Li & Kirubarajan 2001,
//     §5.2 and §10.3).
//   - ukf: 2n+1 sigma points through F in the prediction and 2n+1 through
//     H in the update: 2(2n+1), 18 for cv2d (n = 4), 6 for ungm (n = 1)
//     and 22 for ctrb (n = 5) (Julier 2002, the scaled unscented
//     transform; Wan & van der Merwe 2000, Algorithm 3.1).
//   - pf: each of the N particles through the transition and through the
//     measurement model once: 2N (Gordon, Salmond & Smith 1993, §3).
func TestEvalsPerStep(t *testing.T) {
	s, err := ParseSuite("evals.toml", []byte(`
name = "survey-drone-evals"
runs = 2
[[problem]]
use = "cv2d"
steps = 10
[[problem]]
use = "ungm"
steps = 10
[[problem]]
use = "ctrb"
steps = 10
[[filter]]
use = "kf"
[[filter]]
use = "ekf"
[[filter]]
use = "ukf"
[[filter]]
use = "pf"
particles = 200
`), Builtin())
	if err != nil {
		t.Fatal(err)
	}
	want := map[string]float64{
		"cv2d(steps=10) kf": 4, "cv2d(steps=10) ekf": 4, "cv2d(steps=10) ukf": 18, "cv2d(steps=10) pf": 400,
		"ungm(steps=10) ekf": 4, "ungm(steps=10) ukf": 6, "ungm(steps=10) pf": 400,
		"ctrb(steps=10) ekf": 4, "ctrb(steps=10) ukf": 22, "ctrb(steps=10) pf": 400,
	}
	out, err := Run(s, Options{Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	seen := 0
	for _, p := range out.Pairs {
		if !p.Applicable {
			continue
		}
		seen++
		if w := want[p.Problem+" "+p.Filter]; p.EvalsPerStep != w {
			t.Errorf("%s %s: %v evaluations per step, want %v", p.Problem, p.Filter, p.EvalsPerStep, w)
		}
		// The probe runs on the counting model; its steps still allocate
		// nothing (the project's rule for every filter).
		if p.AllocsPerStep != 0 {
			t.Errorf("%s %s: %v allocations per step on the counting model, want 0", p.Problem, p.Filter, p.AllocsPerStep)
		}
	}
	if seen != len(want) {
		t.Errorf("%d applicable pairs, want %d", seen, len(want))
	}
}

// A nil Jacobian stays nil under countingModel, so the ekf falls back to
// central differences of F and H, and each difference is charged: per
// step 1 + 2n calls of F and 1 + 2n of H (two evaluations per component
// for a central difference; Press et al. 2007, "Numerical Recipes", 3rd
// ed., §5.7, section number from memory), 6 on ungm (n = 1).
func TestCountingModelKeepsFallbacks(t *testing.T) {
	spec, ok := Builtin().Problem("ungm")
	if !ok {
		t.Fatal("no ungm in the catalogue")
	}
	prob, err := spec.Build(Defaults(spec.Params))
	if err != nil {
		t.Fatal(err)
	}
	var n evalCount
	m := prob.Model
	m.FJac, m.HJac = nil, nil
	cm := countingModel(m, &n)
	if cm.FJac != nil || cm.HJac != nil || cm.FW != nil || cm.HV != nil || cm.MeasLogLik != nil {
		t.Fatal("countingModel made a nil function non-nil")
	}
	f, err := filters.NewEKF(&cm, filters.EKFConfig{})
	if err != nil {
		t.Fatal(err)
	}
	var seq datasets.Sequence
	prob.Run(&seq, rand.New(rand.NewPCG(1, 2)))
	if err := f.Reset(prob.X0, prob.P0, nil); err != nil {
		t.Fatal(err)
	}
	n.evals = 0
	const steps = 10
	for k := 1; k <= steps; k++ {
		if err := f.Predict(k); err != nil {
			t.Fatal(err)
		}
		if err := f.Update(seq.Meas(k), k); err != nil {
			t.Fatal(err)
		}
	}
	if got := float64(n.evals) / steps; got != 6 {
		t.Errorf("%v evaluations per step, want 6", got)
	}
}

// The counters themselves allocate nothing per call.
func TestCountingModelAllocates0(t *testing.T) {
	spec, _ := Builtin().Problem("ctrb")
	prob, err := spec.Build(Defaults(spec.Params))
	if err != nil {
		t.Fatal(err)
	}
	var n evalCount
	cm := countingModel(prob.Model, &n)
	nx, nz := cm.Nx, cm.Nz
	x, fx := make([]float64, 3*nx), make([]float64, 3*nx)
	copy(x, prob.X0)
	copy(x[nx:], prob.X0)
	copy(x[2*nx:], prob.X0)
	z, jac := make([]float64, 3*nz), make([]float64, nx*nx)
	allocs := testing.AllocsPerRun(100, func() {
		cm.F(fx[:nx], x[:nx], 1)
		cm.H(z[:nz], x[:nx], 1)
		cm.FJac(jac, x[:nx], 1)
		cm.FMany(fx, x, 1)
		cm.HMany(z, x, 1)
	})
	if allocs != 0 {
		t.Errorf("%v allocations per call, want 0", allocs)
	}
	// 101 rounds (AllocsPerRun adds a warm-up) of 1 + 1 + 1 + 3 + 3.
	if n.evals != 101*9 {
		t.Errorf("%d evaluations counted, want %d", n.evals, 101*9)
	}
}
