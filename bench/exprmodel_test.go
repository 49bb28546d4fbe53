package bench

import (
	"bytes"
	"math"
	"math/rand/v2"
	"runtime"
	"strings"
	"testing"

	"github.com/expr-lang/expr"
	"github.com/expr-lang/expr/vm"

	"github.com/estbench/estbench/datasets"
	"github.com/estbench/estbench/filters"
	"github.com/estbench/estbench/filters/filtertest"
)

// exprUNGMSuite writes out the univariate nonstationary growth model of
// datasets.NewUNGM (Gordon, Salmond & Smith 1993, IEE Proc. F 140(2),
// with the defaults Q = 10, R = 1, P0 = 5 and 100 steps) as an expression
// model, with the same operations in the same order as the Go code:
// ungmDrift(x) + ungmForcing(k) = (0.5*x + 25*x/(1+x*x)) + 8*cos(1.2*k).
const exprUNGMSuite = `
name = "expr-ungm"
seed = 3
runs = 4
[[problem]]
model = "expr"
name = "harbour-launch-ungm"
states = ["x"]
measurements = ["y"]
params = { a = 0.5, b = 25.0, c = 8.0 }
transition = ["a*x + b*x/(1 + x^2) + c*cos(1.2*k)"]
measurement = ["x^2/20"]
process_noise = [[10.0]]
measurement_noise = [[1.0]]
prior_mean = [0.0]
prior_cov = [[5.0]]
[[filter]]
use = "pf"
[[filter]]
use = "ekf"
[[filter]]
use = "ukf"
`

func exprBuildFirst(t testing.TB, s *Suite) *datasets.Problem {
	t.Helper()
	c := s.Problems[0]
	p, err := c.Spec.Build(c.Values)
	if err != nil {
		t.Fatal(err)
	}
	return p
}

// exactArch reports whether the gc compiler keeps every float64 operation
// of the built-in models rounded on its own. The Go specification lets an
// implementation fuse x*y + z into one rounding (The Go Programming
// Language Specification, "Floating-point operators"); gc does so on
// arm64, ppc64le, s390x, riscv64 and loong64 but not on amd64 or 386
// (from memory of the compiler's rewrite rules). The lowered expressions
// cannot fuse: each operation returns from its own closure.
func exactArch() bool { return runtime.GOARCH == "amd64" || runtime.GOARCH == "386" }

// sameFloats compares bit for bit where the arithmetic is exact, else to a
// relative 1e-12 (a few fused roundings, from the reasoning of exactArch).
func exprSameFloats(t *testing.T, what string, got, want []float64) {
	t.Helper()
	if len(got) != len(want) {
		t.Fatalf("%s: %d values, want %d", what, len(got), len(want))
	}
	for i := range got {
		g, w := got[i], want[i]
		if exactArch() {
			if math.Float64bits(g) != math.Float64bits(w) {
				t.Fatalf("%s[%d] = %v, want %v bit for bit", what, i, g, w)
			}
		} else if math.Abs(g-w) > 1e-12*math.Max(1, math.Abs(w)) {
			t.Fatalf("%s[%d] = %v, want %v to 1e-12", what, i, g, w)
		}
	}
}

// The expression UNGM and datasets.NewUNGM simulate the same sequence from
// the same stream. The expressions evaluate the same IEEE 754 operations
// in the same order as the Go code, so on amd64 the results agree bit for
// bit; x^2 is math.Pow(x, 2), which squares the fraction of frexp(x) with
// one rounding and scales it by a power of two (Go's math/pow.go), the same
// value as x*x whenever that is a normal number.
func TestExprUNGMSequenceMatchesBuiltin(t *testing.T) {
	s := mustParse(t, exprUNGMSuite, Builtin())
	ex := exprBuildFirst(t, s)
	bi, err := datasets.NewUNGM(datasets.UNGMConfig{})
	if err != nil {
		t.Fatal(err)
	}
	if ex.Steps != bi.Steps || ex.Dt != bi.Dt || ex.Model.Nx != 1 || ex.Model.Nz != 1 {
		t.Fatalf("steps %d dt %v dims %d %d", ex.Steps, ex.Dt, ex.Model.Nx, ex.Model.Nz)
	}
	want := datasets.Traits{Differentiable: true, AdditiveNoise: true, GaussianNoise: true}
	if ex.Traits != want {
		t.Errorf("traits %+v, want %+v", ex.Traits, want)
	}
	var a, b datasets.Sequence
	for seed := uint64(1); seed <= 5; seed++ {
		ex.Run(&a, rand.New(rand.NewPCG(seed, 99)))
		bi.Run(&b, rand.New(rand.NewPCG(seed, 99)))
		exprSameFloats(t, "X0", a.X0, b.X0)
		exprSameFloats(t, "Truth", a.Truth, b.Truth)
		exprSameFloats(t, "Z", a.Z, b.Z)
		exprSameFloats(t, "T", a.T, b.T)
	}
}

// runFilter runs f over seq and returns every step's mean and covariance.
func exprRunFilter(t *testing.T, f filters.Filter, p *datasets.Problem, seq *datasets.Sequence, seed uint64) []float64 {
	t.Helper()
	nx := p.Model.Nx
	if err := f.Reset(p.X0, p.P0, rand.New(rand.NewPCG(seed, 7))); err != nil {
		t.Fatal(err)
	}
	out := make([]float64, 0, p.Steps*(nx+nx*nx))
	x, c := make([]float64, nx), make([]float64, nx*nx)
	for k := 1; k <= p.Steps; k++ {
		if err := f.Predict(k); err != nil {
			t.Fatalf("step %d: %v", k, err)
		}
		if err := f.Update(seq.Meas(k), k); err != nil {
			t.Fatalf("step %d: %v", k, err)
		}
		f.EstimateTo(x, c)
		out = append(out, x...)
		out = append(out, c...)
	}
	return out
}

// Filters give the same results on the expression UNGM as on the built-in
// one. pf and ukf use F and H only. The built-in model has analytic
// Jacobians and the expression model none, so for ekf the built-in model's
// Jacobians are removed: both then take central differences of the same
// functions.
func TestExprUNGMFiltersMatchBuiltin(t *testing.T) {
	cat := Builtin()
	s := mustParse(t, exprUNGMSuite, cat)
	ex := exprBuildFirst(t, s)
	bi, _ := datasets.NewUNGM(datasets.UNGMConfig{})
	noJac := *bi
	noJac.Model.FJac, noJac.Model.HJac = nil, nil
	var seq datasets.Sequence
	bi.Run(&seq, rand.New(rand.NewPCG(5, 6)))
	for _, fc := range s.Filters {
		ref := bi
		if fc.Spec.Name == "ekf" {
			ref = &noJac
		}
		fe, err := fc.Spec.New(&ex.Model, fc.Values)
		if err != nil {
			t.Fatal(err)
		}
		fb, err := fc.Spec.New(&ref.Model, fc.Values)
		if err != nil {
			t.Fatal(err)
		}
		exprSameFloats(t, fc.Spec.Name, exprRunFilter(t, fe, ex, &seq, 11), exprRunFilter(t, fb, ref, &seq, 11))
	}
}

// exprCV2DSuite writes out datasets.NewCV2D with its defaults (T = 1 s,
// q = 1, r = 100; Bar-Shalom, Li & Kirubarajan 2001, §6.3.2, DWNA), whose
// process noise per axis q [[T⁴/4, T³/2], [T³/2, T²]] is singular.
const exprCV2DSuite = `
name = "expr-cv2d"
[[problem]]
model = "expr"
name = "shore-radar-cv"
states = ["px", "vx", "py", "vy"]
measurements = ["zx", "zy"]
transition = ["px + dt*vx", "vx", "py + dt*vy", "vy"]
measurement = ["px", "py"]
process_noise = [[0.25, 0.5, 0, 0], [0.5, 1, 0, 0], [0, 0, 0.25, 0.5], [0, 0, 0.5, 1]]
measurement_noise = [100, 100]
prior_mean = [0, 10, 0, 5]
prior_cov = [100, 25, 100, 25]
scored = ["px", "py"]
[[filter]]
use = "kf"
`

// A model whose expressions are affine in the state is linear, so kf
// applies; it gives the built-in cv2d's results. The kf takes A and C by
// central differences about the origin with unit step, exact here (the
// entries are 0, 1 and T = 1).
func TestExprCV2DLinearMatchesBuiltin(t *testing.T) {
	cat := Builtin()
	s := mustParse(t, exprCV2DSuite, cat)
	ex := exprBuildFirst(t, s)
	bi, _ := datasets.NewCV2D(datasets.CV2DConfig{})
	if !ex.Traits.Linear || !ex.Model.Linear {
		t.Fatal("affine expression model not detected as linear")
	}
	if ok, why := s.Filters[0].Spec.Applies(ex.Traits); !ok {
		t.Fatalf("kf does not apply: %s", why)
	}
	var a, b datasets.Sequence
	ex.Run(&a, rand.New(rand.NewPCG(8, 9)))
	bi.Run(&b, rand.New(rand.NewPCG(8, 9)))
	exprSameFloats(t, "Truth", a.Truth, b.Truth)
	exprSameFloats(t, "Z", a.Z, b.Z)
	fc := s.Filters[0]
	fe, _ := fc.Spec.New(&ex.Model, fc.Values)
	fb, _ := fc.Spec.New(&bi.Model, fc.Values)
	exprSameFloats(t, "kf", exprRunFilter(t, fe, ex, &a, 1), exprRunFilter(t, fb, bi, &a, 1))
}

// The linearity check is structural and conservative: affine means sums of
// state terms with coefficients that do not read the state.
func TestExprLinearity(t *testing.T) {
	for _, tc := range []struct {
		src    string
		linear bool
	}{
		{"x", true},
		{"2*x - y/3 + 7", true},
		{"cos(1.2*k)*x + t", true},
		{"(x + y)*a", true},
		{"k > 3 ? x : -y", true},
		{"let c = sin(k); c*x", true},
		{"-(x - 2*y)", true},
		{"x*y", false},
		{"x^1", false},
		{"1/x", false},
		{"sin(x)", false},
		{"x > 0 ? x : -x", false},
		{"let s = x*x; s", false},
		{"abs(x)", false},
		{"k % 2 * x", true},
	} {
		prog, e := compileExpr(tc.src, []string{"x", "y"}, []string{"a"}, nil)
		if e != nil {
			t.Fatalf("%q: %s", tc.src, e.msg)
		}
		_, lin, _, e := lowerFunction([]*vm.Program{prog}, []string{"x", "y"}, map[string]float64{"a": 2}, 0.5)
		if e != nil {
			t.Fatalf("%q: %s", tc.src, e.msg)
		}
		if lin != tc.linear {
			t.Errorf("%q: linear = %v, want %v", tc.src, lin, tc.linear)
		}
	}
}

// exprCases cover every operator and function of the README's list, with
// integer and float operands, let, conditions and subexpressions that
// depend on k only (cached per step).
var exprCases = []string{
	"a*x + b*x/(1 + x^2) + c*cos(1.2*k)",
	"x ** 3 - y ^ 0.5 + 2 ^ k",
	"x % 3 + k % 4 + mod(y, 2.5) + 7.5 % 2 + -k % 3",
	"-k * 3 + -(k - 1) + k*-2 + (-k) / 4",
	"x > 0 ? sqrt(x) : -sqrt(-x)",
	"x > 0 and y < 1 || !(x == y) ? 1 : 2",
	"not (x >= 1) && x <= 2 ? x : y",
	"x != y ? t : dt",
	"sin(x) + cos(y) + tan(x/3)",
	"asin(x/10) + acos(y/10) + atan(x)",
	"atan2(y, x) + hypot(x, y)",
	"sinh(x/10) + cosh(y/10) + tanh(x)",
	"exp(x/10) + log(abs(y) + 1) + log10(abs(x) + 1)",
	"pow(abs(x), 1.5) + abs(y) + pow(k, 2)",
	"floor(x) + ceil(y) + round(x*2.5)",
	"min(x, y) + max(x, y, 3) + min(x) + max(k, 2)",
	"wrap(x * 3)",
	"let r = hypot(x, y); r * cos(atan2(y, x)) + pi",
	"k / 2 + k ^ 2 + t",
	"let f = cos(1.2*k); x*f + f",
	"k == 3 ? x : k < 3 ? y : 0",
	"x / y + 1/(k - 3)",
	"c*sin(0.3*t)*x + exp(-k/10)",
	"k == 2 ? 1 : 0",
	"(x > 1 ? x > 2 : y > 2) ? 1 : -1",
	"1/(0 * -3) + 1/(-4 % 2) + 1/(-(2 - 2)) + x", // integer zeros are +0
}

// The lowered closures agree bit for bit with the library's own virtual
// machine (github.com/expr-lang/expr v1.17.8, vm.VM), the reference for
// the language's semantics, on every case over a spread of inputs: signed
// zeros, integers, fractions, large and tiny values. Integer arithmetic
// beyond ±2^53 (where float64 rounds and int wraps) is outside the check.
func TestExprLoweredEqualsVM(t *testing.T) {
	states, pnames := []string{"x", "y"}, []string{"a", "b", "c"}
	params := map[string]float64{"a": 0.5, "b": 25, "c": 8}
	const dt = 0.25
	xs := []float64{0, math.Copysign(0, -1), 1, -1, 0.5, 2, 3, -3.5, 7.25, 1e-3, -1e3, 1e-200, 12.5}
	rng := rand.New(rand.NewPCG(1, 2))
	for range 20 {
		xs = append(xs, 10*rng.NormFloat64())
	}
	ks := []int{0, 1, 2, 3, 4, 5, 3, 3, 12, 0, 7}
	var machine vm.VM
	for _, src := range exprCases {
		prog, e := compileExpr(src, states, pnames, nil)
		if e != nil {
			t.Fatalf("%q: %s", src, e.msg)
		}
		fn, _, _, e := lowerFunction([]*vm.Program{prog}, states, params, dt)
		if e != nil {
			t.Fatalf("%q: %s", src, e.msg)
		}
		env := exprEnv(states, pnames)
		for n, v := range params {
			env[n] = v
		}
		env["dt"] = dt
		dst := make([]float64, 1)
		for i, x := range xs {
			y := xs[(i*7+3)%len(xs)]
			for _, k := range ks {
				env["x"], env["y"], env["k"], env["t"] = x, y, float64(k), float64(k)*dt
				out, err := machine.Run(prog, env)
				if err != nil {
					t.Fatalf("%q at x=%v y=%v k=%d: vm: %v", src, x, y, k, err)
				}
				var want float64
				switch w := out.(type) {
				case float64:
					want = w
				case int:
					want = float64(w)
				default:
					t.Fatalf("%q: vm gave %T", src, out)
				}
				fn.eval(dst, []float64{x, y}, k)
				got := dst[0]
				if math.Float64bits(got) != math.Float64bits(want) && !(math.IsNaN(got) && math.IsNaN(want)) {
					t.Fatalf("%q at x=%v y=%v k=%d: lowered %v, vm %v", src, x, y, k, got, want)
				}
			}
		}
	}
}

// Evaluating the model functions, and a filter step on an expression
// model, allocate nothing.
func TestExprNoAllocs(t *testing.T) {
	s := mustParse(t, strings.Replace(string(readSuiteFile(t, "good/harbour-launch-expr.toml")), `use = "pf"`, `use = "pf"`, 1), Builtin())
	for _, c := range s.Problems {
		p, err := c.Spec.Build(c.Values)
		if err != nil {
			t.Fatal(err)
		}
		m := &p.Model
		x, dst, z := make([]float64, m.Nx), make([]float64, m.Nx), make([]float64, m.Nz)
		copy(x, p.X0)
		k := 0
		if a := testing.AllocsPerRun(100, func() {
			k++
			m.F(dst, x, k)
			m.H(z, x, k)
		}); a != 0 {
			t.Errorf("%s: F and H allocate %v times per call", p.Name, a)
		}
		for _, name := range []string{"pf", "ekf", "ukf"} {
			fs, _ := Builtin().Filter(name)
			f, err := fs.New(m, Defaults(fs.Params))
			if err != nil {
				t.Fatal(err)
			}
			m.H(z, p.X0, 1)
			filtertest.NoAllocs(t, f, m, p.X0, p.P0, z)
		}
	}
}

// Expressions enter the canonical form and so the hash; the way the file
// is written does not.
func TestExprCanonical(t *testing.T) {
	cat := Builtin()
	a := mustParse(t, exprUNGMSuite, cat)
	other := strings.Replace(exprUNGMSuite, "c*cos(1.2*k)", "c*cos(1.3*k)", 1)
	if b := mustParse(t, other, cat); b.Hash() == a.Hash() {
		t.Error("a different transition has the same hash")
	}
	other = strings.Replace(exprUNGMSuite, "c = 8.0", "c = 8.5", 1)
	if b := mustParse(t, other, cat); b.Hash() == a.Hash() {
		t.Error("a different parameter has the same hash")
	}
	// Diagonal lists for full matrices, other key order, comments, defaults
	// written out, the params table as a sub-table.
	same := `
name = "expr-ungm"   # comment
runs = 4
seed = 3
[[problem]]
model = "expr"
measurement_noise = [1]
name = "harbour-launch-ungm"
process_noise = [10]
measurement = [ "x^2/20" ]
states = ["x"]
measurements = ["y"]
transition = ["  a*x + b*x/(1 + x^2) + c*cos(1.2*k)  "]
prior_cov = [5]
steps = 100
dt = 1
scored = ["x"]
differentiable = true
[problem.params]
c = 8
b = 25
a = 0.5
[[filter]]
use = "pf"
[[filter]]
use = "ekf"
[[filter]]
use = "ukf"
`
	b := mustParse(t, same, cat)
	if ca, cb := a.Canonical(), b.Canonical(); !bytes.Equal(ca, cb) {
		t.Errorf("canonical forms differ:\n%s\n---\n%s", ca, cb)
	}
}

// The runner takes an expression model like any other: results do not
// depend on the worker count, and ekf's note names the declared trait.
func TestExprRun(t *testing.T) {
	text := strings.Replace(exprUNGMSuite, `prior_cov = [[5.0]]`, "prior_cov = [[5.0]]\nsteps = 30", 1)
	text = strings.Replace(text, `[[filter]]
use = "pf"`, `[[filter]]
use = "pf"
particles = 200`, 1)
	text += `
[[problem]]
model = "expr"
name = "drone-stairs"
states = ["h"]
measurements = ["baro"]
transition = ["h + (k % 10 == 0 ? 1 : 0)"]
measurement = ["floor(h*2)/2"]
process_noise = [0.01]
measurement_noise = [0.04]
prior_cov = [1]
steps = 30
differentiable = false
`
	var outs [2]*Outcome
	for i, w := range []int{1, 2} {
		out, err := Run(mustParse(t, text, Builtin()), Options{Workers: w})
		if err != nil {
			t.Fatal(err)
		}
		outs[i] = out
	}
	if len(outs[0].Pairs) != 6 {
		t.Fatalf("%d pairs, want 2 problems x 3 filters", len(outs[0].Pairs))
	}
	for i, p := range outs[0].Pairs {
		q := outs[1].Pairs[i]
		if p.Problem != q.Problem || p.Applicable != q.Applicable || p.Summary.RMSE != q.Summary.RMSE && !(math.IsNaN(p.Summary.RMSE) && math.IsNaN(q.Summary.RMSE)) {
			t.Errorf("pair %d differs between 1 and 2 workers: %+v / %+v", i, p, q)
		}
	}
	p := outs[0].Pairs[4]
	if p.Problem != "drone-stairs" || p.Filter != "ekf" || p.Applicable ||
		p.Note != "ekf needs a differentiable model; drone-stairs is declared not differentiable (differentiable = false)" {
		t.Errorf("ekf on drone-stairs: %+v", p)
	}
	if p := outs[0].Pairs[0]; p.Problem != "harbour-launch-ungm" || !p.Applicable || p.Summary.Runs != 4 {
		t.Errorf("pf on the expression ungm: %+v", p)
	}
}

// The library's virtual machine allocates on every evaluation; the reason
// the expressions are lowered (see exprmodel.go).
func TestExprVMAllocates(t *testing.T) {
	env := exprEnv([]string{"x"}, []string{"a", "b", "c"})
	prog, err := expr.Compile("a*x + b*x/(1 + x^2) + c*cos(1.2*k)", exprOptions(env)...)
	if err != nil {
		t.Fatal(err)
	}
	var machine vm.VM
	x := 0.0
	a := testing.AllocsPerRun(100, func() {
		x += 0.37
		env["x"] = x
		if _, err := machine.Run(prog, env); err != nil {
			t.Fatal(err)
		}
	})
	if a == 0 {
		t.Error("the vm no longer allocates; consider running it instead of the lowered closures")
	}
	t.Logf("vm: %v allocations per evaluation", a)
}

// x^2 and x^3 are lowered to x*x and x*x*x; the library computes them
// with math.Pow. The two agree bit for bit whenever the result is a normal
// number (the reasoning is at the lowering of ^); this checks it over
// magnitudes from 1e-100 to 1e100 and both signs.
func TestExprPowSquares(t *testing.T) {
	rng := rand.New(rand.NewPCG(21, 22))
	for range 100000 {
		x := math.Pow(10, 200*rng.Float64()-100)
		if rng.IntN(2) == 0 {
			x = -x
		}
		if got, want := x*x, math.Pow(x, 2); math.Float64bits(got) != math.Float64bits(want) {
			t.Fatalf("x = %v: x*x = %v, math.Pow(x, 2) = %v", x, got, want)
		}
		if got, want := x*x*x, math.Pow(x, 3); math.Abs(want) >= 0x1p-1022 && math.Float64bits(got) != math.Float64bits(want) {
			t.Fatalf("x = %v: x*x*x = %v, math.Pow(x, 3) = %v", x, got, want)
		}
	}
}
