package bench

import (
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"

	"github.com/expr-lang/expr/ast"
	"github.com/expr-lang/expr/parser"
	"github.com/expr-lang/expr/vm"
	"gonum.org/v1/gonum/mat"
)

// exprTableKeys are the keys of a model = "expr" table, in the order the
// README documents them.
var exprTableKeys = []string{"model", "name", "states", "measurements", "params", "transition", "measurement",
	"process_noise", "measurement_noise", "prior_mean", "prior_cov", "steps", "dt", "scored", "angles", "differentiable"}

// exprRequired are the keys a model = "expr" table must have, with the
// example its "missing" message gives.
var exprRequired = []struct{ key, example string }{
	{"states", `states = ["x"]`},
	{"measurements", `measurements = ["y"]`},
	{"transition", `transition = ["0.5*x"], one expression per state`},
	{"measurement", `measurement = ["x^2/20"], one expression per measurement`},
	{"process_noise", `process_noise = [[10.0]], the covariance Q`},
	{"measurement_noise", `measurement_noise = [[1.0]], the covariance R`},
	{"prior_cov", `prior_cov = [[5.0]], the covariance of the initial state`},
}

// Defaults of a model = "expr" table.
const (
	defaultExprSteps = 100
	defaultExprDt    = 1.0
)

// exprTable reads one model = "expr" table.
type exprTable struct {
	p    *suiteParser
	i    int // index of the table among the [[problem]] tables
	elem map[string]any
	ctx  string // `problem "name"` once the name is known
	m    *exprModel
	// raw values whose checks need other keys
	q, r, p0, x0 any
	has          map[string]bool
}

func (t *exprTable) keyLine(key string) int { return t.p.lines.keyLine("problem", t.i, key) }

func (t *exprTable) errorf(line int, format string, args ...any) *SuiteError {
	return t.p.errorf(line, t.ctx, format, args...)
}

// exprProblem reads element i of the [[problem]] tables, which has a model
// key. The model key is checked first, then name (messages name the model
// by it), then the other keys in file order, then missing keys, then the
// checks that relate several keys: names, transition, measurement,
// process_noise, measurement_noise, prior_mean, prior_cov, scored, angles.
func (p *suiteParser) exprProblem(i int, elem map[string]any, keys []string) error {
	t := &exprTable{p: p, i: i, elem: elem, ctx: "problem", has: make(map[string]bool)}
	tableLine := p.lines.tableLine("problem", i)
	line := t.keyLine("model")
	if _, ok := elem["use"]; ok {
		return t.errorf(line, `use and model exclude each other: use names a problem of the catalogue, model = "expr" defines one in the file`)
	}
	if s, ok := elem["model"].(string); !ok || s != "expr" {
		got := tomlTypeName(elem["model"])
		if ok {
			got = strconv.Quote(s) + hint(s, []string{"expr"}, "kinds")
		}
		return t.errorf(line, `model: expected "expr" (the one kind of model a suite file defines), got %s`, got)
	}
	v, ok := elem["name"]
	if !ok {
		return t.errorf(tableLine, `missing "name" (a label for the model's rows, such as name = "drone-altitude")`)
	}
	line = t.keyLine("name")
	name, ok := v.(string)
	switch {
	case !ok:
		return t.errorf(line, "name: expected string, got %s", tomlTypeName(v))
	case strings.TrimSpace(name) == "":
		return t.errorf(line, "name: must not be empty")
	}
	if _, ok := p.cat.Problem(name); ok {
		return t.errorf(line, "name: %q is a problem of the catalogue; give the model another name", name)
	}
	for _, c := range p.suite.Problems {
		if c.expr != nil && c.expr.name == name {
			return t.errorf(line, "name: %q is also the name of the model at line %d; give each model its own name", name, c.Line)
		}
	}
	t.ctx = fmt.Sprintf("problem %q", name)
	t.m = &exprModel{name: name, steps: defaultExprSteps, dt: defaultExprDt, differentiable: true}

	for _, key := range keys {
		if key == "model" || key == "name" {
			continue
		}
		if err := t.key(key, elem[key]); err != nil {
			return err
		}
		t.has[key] = true
	}
	for _, r := range exprRequired {
		if !t.has[r.key] {
			return t.errorf(tableLine, "missing %q (%s)", r.key, r.example)
		}
	}
	if err := t.relate(); err != nil {
		return err
	}
	p.ntab++
	spec := t.m.spec(fmt.Sprintf("%s:%d", p.file, tableLine))
	p.suite.Problems = append(p.suite.Problems, ProblemConfig{Spec: spec, Values: Defaults(spec.Params), Line: tableLine, expr: t.m})
	return nil
}

// noSweep is the end of a message for a list where one value belongs.
const noSweep = " (an expression model does not sweep; write one [[problem]] table per value)"

// key checks one key on its own.
func (t *exprTable) key(key string, v any) error {
	line := t.keyLine(key)
	m := t.m
	var msg string
	switch key {
	case "states":
		m.states, msg = t.nameList(key, v, true)
	case "measurements":
		// Measurement names label angles and messages; expressions do not
		// read them, so they may be words the expressions reserve.
		m.measurements, msg = t.nameList(key, v, false)
	case "params":
		tab, ok := v.(map[string]any)
		if !ok {
			return t.errorf(line, "params: expected table of numbers such as params = { a = 0.5 }, got %s", tomlTypeName(v))
		}
		names := make([]string, 0, len(tab))
		for n := range tab {
			names = append(names, n)
		}
		slices.Sort(names)
		for _, n := range names {
			f, msg := number(tab[n])
			if msg != "" {
				return t.errorf(line, "params: %s: %s", keyTOML(n), msg)
			}
			if msg := checkName(n); msg != "" {
				return t.errorf(line, "params: %s", msg)
			}
			m.paramNames = append(m.paramNames, n)
			m.paramValues = append(m.paramValues, f)
		}
	case "transition", "measurement":
		var list []string
		list, msg = stringList(key, v)
		for j, s := range list {
			if strings.TrimSpace(s) == "" {
				return t.errorf(t.p.lines.elemLine("problem", t.i, key, j, len(list)), "%s: expression %d is empty", key, j+1)
			}
			list[j] = strings.TrimSpace(s)
		}
		if key == "transition" {
			m.transition = list
		} else {
			m.measurement = list
		}
	case "process_noise", "measurement_noise", "prior_cov":
		if msg = matrixShape(key, v); msg == "" {
			switch key {
			case "process_noise":
				t.q = v
			case "measurement_noise":
				t.r = v
			default:
				t.p0 = v
			}
		}
	case "prior_mean":
		if _, msg = numberList(key, v); msg == "" {
			t.x0 = v
		}
	case "steps", "dt":
		q := Param{Name: "steps", Kind: Int, Min: 1, Max: 1e7}
		if key == "dt" {
			q = Param{Name: "dt", Kind: Float, Min: exprMinDt, Max: exprMaxDt}
		}
		if _, list := v.([]any); list {
			return t.errorf(line, "%s: expected %s, got list%s", key, q.Kind, noSweep)
		}
		vals, msg := paramValues(&q, v)
		if msg != "" {
			return t.errorf(line, "%s", msg)
		}
		if key == "steps" {
			m.steps = int(vals[0].Num)
		} else {
			m.dt = vals[0].Num
		}
	case "scored":
		if m.scored, msg = stringList(key, v); msg == "" && len(m.scored) == 0 {
			msg = "scored: empty list; leave scored out to score every state"
		}
	case "angles":
		m.angles, msg = stringList(key, v)
	case "differentiable":
		b, ok := v.(bool)
		if !ok {
			return t.errorf(line, "differentiable: expected boolean, got %s", tomlTypeName(v))
		}
		m.differentiable = b
	default:
		return t.errorf(line, "unknown key %q%s", key, hint(key, exprTableKeys, "valid keys"))
	}
	if msg != "" {
		return t.errorf(line, "%s", msg)
	}
	return nil
}

// nameList reads a non-empty list of distinct names; reserved says whether
// the names must also be free for expressions.
func (t *exprTable) nameList(key string, v any, reserved bool) ([]string, string) {
	list, msg := stringList(key, v)
	if msg != "" {
		return nil, msg
	}
	if len(list) == 0 {
		return nil, key + ": empty list; a model needs at least one"
	}
	for j, s := range list {
		msg := checkName(s)
		if !reserved && !strings.HasPrefix(msg, fmt.Sprintf("%q is not a name", s)) {
			msg = ""
		}
		if msg != "" {
			return nil, key + ": " + msg
		}
		if slices.Index(list, s) < j {
			return nil, fmt.Sprintf("%s: %q is listed twice", key, s)
		}
	}
	return list, ""
}

// checkName checks a state, measurement or parameter name.
func checkName(s string) string {
	ok := s != ""
	for j, r := range s {
		if !(r == '_' || r >= 'a' && r <= 'z' || r >= 'A' && r <= 'Z' || j > 0 && r >= '0' && r <= '9') {
			ok = false
		}
	}
	switch {
	case !ok:
		return fmt.Sprintf("%q is not a name (letters, digits and _, not starting with a digit)", s)
	case exprReserved(s):
		return fmt.Sprintf("%q is reserved (k, t, dt, pi, steps and the function names are)", s)
	case exprKeyword(s):
		return fmt.Sprintf("%q is a word of the expression language", s)
	}
	return ""
}

// exprKeyword reports whether s is a word of the expression language
// (and, not, in, let, true, nil and others) rather than a free name: the
// library's parser is asked, so the list cannot drift from it.
func exprKeyword(s string) bool {
	tree, err := parser.Parse(s)
	if err != nil {
		return true
	}
	id, ok := tree.Node.(*ast.IdentifierNode)
	return !ok || id.Value != s
}

// stringList reads a list of strings.
func stringList(key string, v any) ([]string, string) {
	list, ok := v.([]any)
	if !ok {
		return nil, fmt.Sprintf("%s: expected list of strings, got %s", key, tomlTypeName(v))
	}
	out := make([]string, len(list))
	for j, e := range list {
		s, ok := e.(string)
		if !ok {
			return nil, fmt.Sprintf("%s: expected list of strings, got list containing %s", key, tomlTypeName(e))
		}
		out[j] = s
	}
	return out, ""
}

// number reads a finite number (a TOML integer or float).
func number(v any) (float64, string) {
	switch x := v.(type) {
	case int64:
		if x > maxExactInt || x < -maxExactInt {
			return 0, fmt.Sprintf("%d is too large; integers must be within ±2^53", x)
		}
		return float64(x), ""
	case float64:
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return 0, "must be a finite number, got " + formatTOMLFloat(x)
		}
		return x + 0, ""
	case []any:
		return 0, "expected number, got list" + noSweep
	}
	return 0, "expected number, got " + tomlTypeName(v)
}

// numberList reads a list of finite numbers.
func numberList(key string, v any) ([]float64, string) {
	list, ok := v.([]any)
	if !ok {
		return nil, fmt.Sprintf("%s: expected list of numbers, got %s", key, tomlTypeName(v))
	}
	out := make([]float64, len(list))
	for j, e := range list {
		if _, isList := e.([]any); isList {
			return nil, fmt.Sprintf("%s: expected list of numbers, got list containing list", key)
		}
		f, msg := number(e)
		if msg != "" {
			return nil, fmt.Sprintf("%s: element %d: %s", key, j+1, msg)
		}
		out[j] = f
	}
	return out, ""
}

// matrixShape checks that v is a list of numbers (the diagonal of a
// covariance) or a list of lists of numbers (its rows).
func matrixShape(key string, v any) string {
	list, ok := v.([]any)
	if !ok {
		return fmt.Sprintf("%s: expected list of variances or list of rows, got %s", key, tomlTypeName(v))
	}
	if len(list) == 0 {
		return key + ": empty list"
	}
	if _, rows := list[0].([]any); !rows {
		_, msg := numberList(key, v)
		return msg
	}
	for j, e := range list {
		if _, msg := numberList(fmt.Sprintf("%s: row %d", key, j+1), e); msg != "" {
			return msg
		}
	}
	return ""
}

// matrix reads a covariance checked by matrixShape as an n×n row-major
// matrix: a diagonal from a list of numbers, else the rows.
func (t *exprTable) matrix(key string, v any, n int, what string) ([]float64, *SuiteError) {
	list := v.([]any)
	out := make([]float64, n*n)
	if _, rows := list[0].([]any); !rows {
		if len(list) != n {
			return nil, t.errorf(t.keyLine(key), "%s: %s for %s; give %d variances [...] or a %d×%d matrix [[...], ...]",
				key, count(len(list), "variance"), count(n, what), n, n, n)
		}
		d, _ := numberList(key, v)
		for j, x := range d {
			out[j*n+j] = x
		}
		return out, nil
	}
	if len(list) != n {
		return nil, t.errorf(t.keyLine(key), "%s: %s for %s; give a %d×%d matrix [[...], ...] or %d variances [...]",
			key, count(len(list), "row"), count(n, what), n, n, n)
	}
	for j, e := range list {
		row, _ := numberList(key, e)
		if len(row) != n {
			return nil, t.errorf(t.p.lines.elemLine("problem", t.i, key, j, n), "%s: row %d has %s, want %d", key, j+1, count(len(row), "entry", "entries"), n)
		}
		copy(out[j*n:], row)
	}
	for a := 0; a < n; a++ {
		for b := a + 1; b < n; b++ {
			if out[a*n+b] != out[b*n+a] {
				return nil, t.errorf(t.keyLine(key), "%s: not symmetric: row %d column %d is %s, row %d column %d is %s",
					key, a+1, b+1, formatTOMLFloat(out[a*n+b]), b+1, a+1, formatTOMLFloat(out[b*n+a]))
			}
		}
	}
	return out, nil
}

// Tolerances of the covariance checks, relative to the largest eigenvalue:
// common practice with no source. Eigenvalues of a matrix that is singular
// by construction (a rank-one process noise Γ q Γᵀ) come out within a few
// multiples of 1e-16 of zero.
const (
	pdTol  = 1e-12 // positive definite: smallest eigenvalue above pdTol·largest
	psdTol = 1e-12 // positive semi-definite: smallest eigenvalue at least -psdTol·largest
)

// covariance checks a symmetric matrix: positive definite when pd, else
// positive semi-definite.
func (t *exprTable) covariance(key string, a []float64, n int, pd bool) *SuiteError {
	var eig mat.EigenSym
	if !eig.Factorize(mat.NewSymDense(n, slices.Clone(a)), false) {
		return t.errorf(t.keyLine(key), "%s: eigenvalues could not be computed", key)
	}
	vals := eig.Values(nil) // ascending
	lo, hi := vals[0], vals[n-1]
	scale := max(math.Abs(hi), math.Abs(lo))
	switch {
	case pd && !(lo > pdTol*scale):
		return t.errorf(t.keyLine(key), "%s: not positive definite (smallest eigenvalue %s, largest %s)", key, fmtEig(lo), fmtEig(hi))
	case !pd && lo < -psdTol*scale:
		return t.errorf(t.keyLine(key), "%s: not positive semi-definite (smallest eigenvalue %s, largest %s)", key, fmtEig(lo), fmtEig(hi))
	}
	return nil
}

// fmtEig writes an eigenvalue with 4 significant digits; values within
// rounding of zero are 0.
func fmtEig(v float64) string {
	return strconv.FormatFloat(v, 'g', 4, 64)
}

// count writes "1 state", "2 states"; plural, if given, replaces what+"s".
func count(n int, what string, plural ...string) string {
	if n == 1 {
		return "1 " + what
	}
	if len(plural) > 0 {
		return strconv.Itoa(n) + " " + plural[0]
	}
	return strconv.Itoa(n) + " " + what + "s"
}

// relate makes the checks that relate several keys, and compiles the
// expressions.
func (t *exprTable) relate() error {
	m := t.m
	for _, s := range m.measurements {
		if slices.Contains(m.states, s) {
			return t.errorf(t.keyLine("measurements"), "measurements: %q is also a state; give it another name", s)
		}
	}
	for _, s := range m.paramNames {
		switch {
		case slices.Contains(m.states, s):
			return t.errorf(t.keyLine("params"), "params: %q is also a state; give it another name", s)
		case slices.Contains(m.measurements, s):
			return t.errorf(t.keyLine("params"), "params: %q is also a measurement; give it another name", s)
		}
	}
	params := make(map[string]float64, len(m.paramNames))
	for i, n := range m.paramNames {
		params[n] = m.paramValues[i]
	}
	var err error
	if m.progF, err = t.compile("transition", m.transition, m.states, "state", params); err != nil {
		return err
	}
	if m.progH, err = t.compile("measurement", m.measurement, m.measurements, "measurement", params); err != nil {
		return err
	}
	_, linF, _, _ := lowerFunction(m.progF, m.states, params, m.dt)
	_, linH, _, _ := lowerFunction(m.progH, m.states, params, m.dt)
	m.linear = linF && linH

	nx, nz := len(m.states), len(m.measurements)
	var serr *SuiteError
	if m.q, serr = t.matrix("process_noise", t.q, nx, "state"); serr != nil {
		return serr
	}
	if serr = t.covariance("process_noise", m.q, nx, false); serr != nil {
		return serr
	}
	if m.r, serr = t.matrix("measurement_noise", t.r, nz, "measurement"); serr != nil {
		return serr
	}
	if serr = t.covariance("measurement_noise", m.r, nz, true); serr != nil {
		return serr
	}
	m.x0 = make([]float64, nx)
	if t.x0 != nil {
		x0, _ := numberList("prior_mean", t.x0)
		if len(x0) != nx {
			return t.errorf(t.keyLine("prior_mean"), "prior_mean: %s for %s", count(len(x0), "value"), count(nx, "state"))
		}
		m.x0 = x0
	}
	if m.p0, serr = t.matrix("prior_cov", t.p0, nx, "state"); serr != nil {
		return serr
	}
	if serr = t.covariance("prior_cov", m.p0, nx, true); serr != nil {
		return serr
	}
	if m.scored == nil {
		m.scored = slices.Clone(m.states)
	}
	for j, s := range m.scored {
		if !slices.Contains(m.states, s) {
			return t.errorf(t.keyLine("scored"), "scored: %q is not a state%s", s, hint(s, m.states, "states"))
		}
		if slices.Index(m.scored, s) < j {
			return t.errorf(t.keyLine("scored"), "scored: %q is listed twice", s)
		}
	}
	both := append(slices.Clone(m.states), m.measurements...)
	for j, s := range m.angles {
		if !slices.Contains(both, s) {
			return t.errorf(t.keyLine("angles"), "angles: %q is neither a state nor a measurement%s", s, hint(s, both, "states and measurements"))
		}
		if slices.Index(m.angles, s) < j {
			return t.errorf(t.keyLine("angles"), "angles: %q is listed twice", s)
		}
	}
	return nil
}

// compile compiles the expressions of key (transition or measurement), one
// per name of names, and lowers each once to find constructs the models do
// not support.
func (t *exprTable) compile(key string, srcs, names []string, what string, params map[string]float64) ([]*vm.Program, error) {
	m := t.m
	if len(srcs) != len(names) {
		return nil, t.errorf(t.keyLine(key), "%s: %s for %s (%s); give one per %s, in order",
			key, count(len(srcs), "expression"), count(len(names), what), what+"s = "+listTOML(names), what)
	}
	progs := make([]*vm.Program, len(srcs))
	for j, src := range srcs {
		line := t.p.lines.elemLine("problem", t.i, key, j, len(srcs))
		prog, e := compileExpr(src, m.states, m.paramNames, m.measurements)
		if e == nil {
			_, _, _, e = lowerFunction([]*vm.Program{prog}, m.states, params, m.dt)
		}
		if e != nil {
			msg := e.msg
			if e.from >= 0 {
				msg += " at " + exprPosition(src, e.from)
			}
			return nil, t.errorf(line, "%s of %s, %s: %s%s", key, names[j], strconv.Quote(src), msg, e.hint)
		}
		progs[j] = prog
	}
	return progs, nil
}

// listTOML writes a list of strings as TOML.
func listTOML(list []string) string {
	q := make([]string, len(list))
	for i, s := range list {
		q[i] = quoteTOML(s)
	}
	return "[" + strings.Join(q, ", ") + "]"
}

// writeExprConfig writes a model = "expr" table of the canonical form:
// model and name, then every key sorted, every default written,
// covariances as full matrices, parameters as an inline table with sorted
// keys, expressions as written (trimmed). Reformatting an expression
// therefore changes the canonical form: two suites that differ in it may
// run the same model, but two suites whose models differ never share a
// canonical form.
func writeExprConfig(b *strings.Builder, m *exprModel, v Values) {
	b.WriteString("model = \"expr\"\n")
	b.WriteString("name = " + quoteTOML(m.name) + "\n")
	b.WriteString("angles = " + listTOML(m.angles) + "\n")
	b.WriteString("differentiable = " + strconv.FormatBool(m.differentiable) + "\n")
	b.WriteString("dt = " + formatTOMLFloat(v.Float("dt")) + "\n")
	b.WriteString("measurement = " + listTOML(m.measurement) + "\n")
	b.WriteString("measurement_noise = " + matrixTOML(m.r, len(m.measurements)) + "\n")
	b.WriteString("measurements = " + listTOML(m.measurements) + "\n")
	b.WriteString("params = {")
	for i, n := range m.paramNames {
		if i > 0 {
			b.WriteByte(',')
		}
		b.WriteString(" " + keyTOML(n) + " = " + formatTOMLFloat(v.Float(n)))
	}
	if len(m.paramNames) > 0 {
		b.WriteByte(' ')
	}
	b.WriteString("}\n")
	b.WriteString("prior_cov = " + matrixTOML(m.p0, len(m.states)) + "\n")
	b.WriteString("prior_mean = " + vectorTOML(m.x0) + "\n")
	b.WriteString("process_noise = " + matrixTOML(m.q, len(m.states)) + "\n")
	b.WriteString("scored = " + listTOML(m.scored) + "\n")
	b.WriteString("states = " + listTOML(m.states) + "\n")
	b.WriteString("steps = " + strconv.Itoa(v.Int("steps")) + "\n")
	b.WriteString("transition = " + listTOML(m.transition) + "\n")
}

func vectorTOML(v []float64) string {
	s := make([]string, len(v))
	for i, x := range v {
		s[i] = formatTOMLFloat(x)
	}
	return "[" + strings.Join(s, ", ") + "]"
}

func matrixTOML(a []float64, n int) string {
	rows := make([]string, n)
	for i := range rows {
		rows[i] = vectorTOML(a[i*n : (i+1)*n])
	}
	return "[" + strings.Join(rows, ", ") + "]"
}
