package bench

import (
	"math/rand/v2"
	"strconv"
	"testing"

	"github.com/estbench/estbench/datasets"
	"github.com/estbench/estbench/filters"
)

// BenchmarkStep times one predict+update+estimate step of every built-in
// filter on every built-in problem, as the runner drives it, over one
// simulated run per problem. Steps allocate nothing after set-up.
// Run with: go test -run '^$' -bench Step -benchtime 2s ./bench/
func BenchmarkStep(b *testing.B) {
	cat := Builtin()
	type cfg struct {
		filter string
		set    Values
	}
	configs := []cfg{{"kf", nil}, {"ekf", nil}, {"ukf", nil},
		{"pf", Values{"particles": {Num: 500}}}, {"pf", Values{"particles": {Num: 2000}}}}
	for _, ps := range cat.Problems {
		if ps.Name != "cv2d" && ps.Name != "ungm" && ps.Name != "ctrb" {
			continue
		}
		prob, err := ps.Build(Defaults(ps.Params))
		if err != nil {
			b.Fatal(err)
		}
		var seq datasets.Sequence
		prob.Run(&seq, rand.New(rand.NewPCG(1, 2)))
		for _, c := range configs {
			fs, _ := cat.Filter(c.filter)
			if ok, _ := fs.Applies(prob.Traits); !ok {
				continue
			}
			v := Defaults(fs.Params)
			name := "problem=" + ps.Name + "/filter=" + c.filter
			for k, x := range c.set {
				v[k] = x
				name += "/" + k + "=" + strconv.Itoa(int(x.Num))
			}
			b.Run(name, func(b *testing.B) {
				f, err := fs.New(&prob.Model, v)
				if err != nil {
					b.Fatal(err)
				}
				benchSteps(b, f, prob, &seq, v)
			})
		}
	}
}

func benchSteps(b *testing.B, f filters.Filter, prob *datasets.Problem, seq *datasets.Sequence, v Values) {
	nx := prob.Model.Nx
	x, p := make([]float64, nx), make([]float64, nx*nx)
	rng := rand.New(rand.NewPCG(3, 4))
	reset := func() {
		if err := f.Reset(prob.X0, prob.P0, rng); err != nil {
			b.Fatal(err)
		}
	}
	reset()
	k := 0
	b.ReportAllocs()
	b.ResetTimer()
	// The timer keeps running across the Reset at the end of each run:
	// stopping it calls runtime.ReadMemStats, which pauses the program and
	// disturbs the steps more than a Reset every Steps steps costs.
	for i := 0; i < b.N; i++ {
		k++
		if k > prob.Steps {
			reset()
			k = 1
		}
		if err := f.Predict(k); err != nil {
			reset()
			k = 0
			continue
		}
		if err := f.Update(seq.Meas(k), k); err != nil {
			reset()
			k = 0
			continue
		}
		f.EstimateTo(x, p)
	}
	ns := float64(b.Elapsed().Nanoseconds()) / float64(b.N)
	b.ReportMetric(ns, "ns/step")
	if n, ok := v["particles"]; ok {
		b.ReportMetric(ns/n.Num, "ns/particle-step")
	}
}
