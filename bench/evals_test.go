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
