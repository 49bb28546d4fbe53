package bench

import (
	"math/rand/v2"
	"testing"

	"github.com/expr-lang/expr/vm"

	"github.com/estbench/estbench/datasets"
)

// BenchmarkExprUNGM times a filter step on the expression UNGM of
// exprUNGMSuite against the built-in ungm (analytic Jacobians, batched
// FMany/HMany), on the same simulated run. The aim is a ratio within 5.
// Run with: go test -run '^$' -bench ExprUNGM -benchtime 2s ./bench/
func BenchmarkExprUNGM(b *testing.B) {
	cat := Builtin()
	s, err := ParseSuite("bench.toml", []byte(exprUNGMSuite), cat)
	if err != nil {
		b.Fatal(err)
	}
	ex, err := s.Problems[0].Spec.Build(s.Problems[0].Values)
	if err != nil {
		b.Fatal(err)
	}
	bi, err := datasets.NewUNGM(datasets.UNGMConfig{})
	if err != nil {
		b.Fatal(err)
	}
	var seq datasets.Sequence
	bi.Run(&seq, rand.New(rand.NewPCG(1, 2)))
	for _, fc := range []struct {
		name string
		set  Values
		tag  string
	}{
		{"pf", Values{"particles": {Num: 1000}}, "/particles=1000"},
		{"ekf", nil, ""},
		{"ukf", nil, ""},
	} {
		fs, _ := cat.Filter(fc.name)
		v := Defaults(fs.Params)
		for k, x := range fc.set {
			v[k] = x
		}
		for _, m := range []struct {
			name string
			prob *datasets.Problem
		}{{"builtin", bi}, {"expr", ex}} {
			b.Run("problem=ungm/model="+m.name+"/filter="+fc.name+fc.tag, func(b *testing.B) {
				f, err := fs.New(&m.prob.Model, v)
				if err != nil {
					b.Fatal(err)
				}
				benchSteps(b, f, m.prob, &seq, v)
			})
		}
	}
}

// BenchmarkExprEval times one evaluation of the ungm transition: the
// library's virtual machine (vm.VM reused, environment map reused), the
// lowered closures, and the Go code of datasets.NewUNGM.
func BenchmarkExprEval(b *testing.B) {
	const src = "a*x + b*x/(1 + x^2) + c*cos(1.2*k)"
	states, pnames := []string{"x"}, []string{"a", "b", "c"}
	prog, e := compileExpr(src, states, pnames, nil)
	if e != nil {
		b.Fatal(e.msg)
	}
	b.Run("engine=vm", func(b *testing.B) {
		env := exprEnv(states, pnames)
		env["a"], env["b"], env["c"] = 0.5, 25.0, 8.0
		var machine vm.VM
		b.ReportAllocs()
		for i := 0; b.Loop(); i++ {
			env["x"], env["k"] = float64(i%13)-6, float64(i%100)
			if _, err := machine.Run(prog, env); err != nil {
				b.Fatal(err)
			}
		}
	})
	b.Run("engine=closures", func(b *testing.B) {
		fn, _, _, e := lowerFunction([]*vm.Program{prog}, states, map[string]float64{"a": 0.5, "b": 25, "c": 8}, 1)
		if e != nil {
			b.Fatal(e.msg)
		}
		x, dst := make([]float64, 1), make([]float64, 1)
		b.ReportAllocs()
		for i := 0; b.Loop(); i++ {
			x[0] = float64(i%13) - 6
			fn.eval(dst, x, i%100)
		}
	})
	b.Run("engine=go", func(b *testing.B) {
		p, _ := datasets.NewUNGM(datasets.UNGMConfig{})
		x, dst := make([]float64, 1), make([]float64, 1)
		b.ReportAllocs()
		for i := 0; b.Loop(); i++ {
			x[0] = float64(i%13) - 6
			p.Model.F(dst, x, i%100)
		}
	})
}
