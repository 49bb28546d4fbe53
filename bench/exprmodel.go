package bench

import (
	"fmt"
	"math"
	"reflect"
	"slices"
	"strconv"
	"strings"

	"github.com/expr-lang/expr"
	"github.com/expr-lang/expr/ast"
	"github.com/expr-lang/expr/file"
	"github.com/expr-lang/expr/parser"
	"github.com/expr-lang/expr/vm"

	"github.com/estbench/estbench/datasets"
	"github.com/estbench/estbench/filters"
)

// A model = "expr" table of a suite file defines a model by expressions in
// the language of github.com/expr-lang/expr. The library parses and
// type-checks each expression once, against an environment whose names and
// types are fixed: the state names, the named parameters, k, t, dt and pi
// as float64, and the functions of exprFuncNames. The step index k is a
// float64 too: the library converts integer literals passed to a float64
// function when it compiles, but fails at run time on an int variable
// (cos(k) with k an int gives "interface conversion: interface {} is int,
// not float64" in v1.17.8).
// Its virtual machine boxes every intermediate float64 in an interface
// value, so it allocates on every evaluation: 11 allocations and about
// 0.8-1.6 µs for the ungm transition with vm.VM and the environment map
// reused (BenchmarkExprEval/engine=vm, on a shared 2-core machine), where
// the Go code of datasets.NewUNGM takes about 25-30 ns. A filter step must
// not allocate, so the checked syntax tree is lowered once per Build into a
// tree of Go closures over float64 that evaluates the same operations in
// the same order, calling the same Go functions, without allocating (about
// 60 ns; BenchmarkExprEval/engine=closures). TestExprLoweredEqualsVM checks
// the two agree bit for bit.

// exprFuncNames are the functions expressions may call, in the order the
// README lists them. mod is also the operator % on numbers.
var exprFuncNames = []string{
	"sin", "cos", "tan", "asin", "acos", "atan", "atan2",
	"sinh", "cosh", "tanh", "exp", "log", "log10", "sqrt", "pow", "hypot",
	"abs", "floor", "ceil", "round", "min", "max", "mod", "wrap",
}

// exprReserved are names an expression model may not give a state or a
// parameter: the step variables, the constant pi, the table key steps (a
// parameter of every expression model) and the functions.
func exprReserved(name string) bool {
	switch name {
	case "k", "t", "dt", "pi", "steps":
		return true
	}
	return slices.Contains(exprFuncNames, name)
}

func exprFunc1(name string) func(float64) float64 {
	switch name {
	case "sin":
		return math.Sin
	case "cos":
		return math.Cos
	case "tan":
		return math.Tan
	case "asin":
		return math.Asin
	case "acos":
		return math.Acos
	case "atan":
		return math.Atan
	case "sinh":
		return math.Sinh
	case "cosh":
		return math.Cosh
	case "tanh":
		return math.Tanh
	case "exp":
		return math.Exp
	case "log":
		return math.Log
	case "log10":
		return math.Log10
	case "sqrt":
		return math.Sqrt
	case "abs":
		return math.Abs
	case "floor":
		return math.Floor
	case "ceil":
		return math.Ceil
	case "round":
		return math.Round
	case "wrap":
		return filters.WrapAngle
	}
	return nil
}

func exprFunc2(name string) func(float64, float64) float64 {
	switch name {
	case "atan2":
		return math.Atan2
	case "pow":
		return math.Pow
	case "hypot":
		return math.Hypot
	case "mod":
		return math.Mod
	}
	return nil
}

// exprMin and exprMax are min and max of one or more numbers, folding from
// the left with math.Min and math.Max (so a NaN argument gives NaN).
func exprMin(a float64, rest ...float64) float64 {
	for _, b := range rest {
		a = math.Min(a, b)
	}
	return a
}

func exprMax(a float64, rest ...float64) float64 {
	for _, b := range rest {
		a = math.Max(a, b)
	}
	return a
}

// exprEnv is the environment expressions are checked against (and that
// the library's virtual machine runs on in tests): names with their fixed
// types. Values are zero except pi; params and states are float64.
func exprEnv(states, params []string) map[string]any {
	env := map[string]any{"k": 0.0, "t": 0.0, "dt": 0.0, "pi": math.Pi, "min": exprMin, "max": exprMax}
	for _, f := range exprFuncNames {
		if g := exprFunc1(f); g != nil {
			env[f] = g
		} else if g := exprFunc2(f); g != nil && f != "mod" {
			env[f] = g
		}
	}
	for _, s := range states {
		env[s] = 0.0
	}
	for _, p := range params {
		env[p] = 0.0
	}
	return env
}

// exprOptions are the compile options: no built-in functions of the
// library (its string, list and date functions have no place in a model),
// and mod for % on numbers, which the library keeps for integers.
func exprOptions(env map[string]any) []expr.Option {
	toFloat := func(v any) float64 {
		if i, ok := v.(int); ok {
			return float64(i)
		}
		return v.(float64)
	}
	return []expr.Option{
		expr.Env(env),
		expr.DisableAllBuiltins(),
		expr.Function("mod", func(p ...any) (any, error) { return math.Mod(toFloat(p[0]), toFloat(p[1])), nil },
			new(func(float64, float64) float64), new(func(float64, int) float64), new(func(int, float64) float64)),
		expr.Operator("%", "mod"),
	}
}

// exprError is a mistake in one expression, at a rune offset into it.
type exprError struct {
	from int    // rune offset of the mistake; -1 when it has no position
	msg  string // what is wrong
	hint string // " (did you mean ...?)" or ""; follows the position
}

// compileExpr parses and type-checks src. states and params are the names
// it may use besides k, t, dt, pi and the functions; meas are the
// measurement names, which it may not use but which a mistake may mean.
func compileExpr(src string, states, params, meas []string) (*vm.Program, *exprError) {
	tree, err := parser.Parse(src)
	if err != nil {
		return nil, libError("syntax error", err)
	}
	if e := unknownNames(tree.Node, states, params, meas); e != nil {
		return nil, e
	}
	prog, err := expr.Compile(src, exprOptions(exprEnv(states, params))...)
	if err != nil {
		return nil, libError("", err)
	}
	return prog, nil
}

// libError turns an error of the library into an exprError at its position.
func libError(prefix string, err error) *exprError {
	fe, ok := err.(*file.Error)
	if !ok {
		return &exprError{from: -1, msg: strings.TrimSpace(prefix + " " + err.Error())}
	}
	msg := strings.TrimSpace(fe.Message)
	if prefix != "" {
		msg = prefix + ": " + msg
	}
	return &exprError{from: fe.From, msg: msg}
}

// unknownNames reports the first name in src that is neither a state, a
// parameter, a step variable, pi, a function nor a let variable, with the
// nearest known name as a hint.
func unknownNames(root ast.Node, states, params, meas []string) *exprError {
	var c nameCollector
	ast.Walk(&root, &c)
	known := map[string]bool{"k": true, "t": true, "dt": true, "pi": true}
	for _, n := range exprFuncNames {
		known[n] = true
	}
	for _, n := range append(append([]string{}, states...), params...) {
		known[n] = true
	}
	for _, n := range c.lets {
		known[n] = true
	}
	var first *ast.IdentifierNode
	for _, id := range c.idents {
		if !known[id.Value] && (first == nil || id.Location().From < first.Location().From) {
			first = id
		}
	}
	if first == nil {
		return nil
	}
	name := first.Value
	what := "name"
	candidates := append(append(append([]string{}, states...), params...), "k", "t", "dt", "pi")
	if c.callees[first] {
		what, candidates = "function", exprFuncNames
	}
	e := &exprError{from: first.Location().From, msg: fmt.Sprintf("unknown %s %q", what, name)}
	switch {
	case slices.Contains(meas, name):
		e.hint = fmt.Sprintf(" (%q is a measurement; expressions read states, params, k, t, dt and pi)", name)
	case what == "function":
		e.hint = hint(name, candidates, "functions")
	default:
		if s := Suggest(name, candidates); s != "" {
			e.hint = fmt.Sprintf(" (did you mean %q?)", s)
		}
	}
	return e
}

type nameCollector struct {
	idents  []*ast.IdentifierNode
	callees map[*ast.IdentifierNode]bool
	lets    []string
}

func (c *nameCollector) Visit(n *ast.Node) {
	switch n := (*n).(type) {
	case *ast.IdentifierNode:
		c.idents = append(c.idents, n)
	case *ast.CallNode:
		if id, ok := n.Callee.(*ast.IdentifierNode); ok {
			if c.callees == nil {
				c.callees = make(map[*ast.IdentifierNode]bool)
			}
			c.callees[id] = true
		}
	case *ast.VariableDeclaratorNode:
		c.lets = append(c.lets, n.Name)
	}
}

// exprPosition describes rune offset from of src as "column c" or, for an
// expression over several lines, "line l, column c" (both 1-based).
func exprPosition(src string, from int) string {
	line, col, n := 1, 1, 0
	for _, r := range src {
		if n == from {
			break
		}
		n++
		if r == '\n' {
			line, col = line+1, 1
		} else {
			col++
		}
	}
	if line > 1 {
		return fmt.Sprintf("line %d, column %d", line, col)
	}
	return "column " + strconv.Itoa(col)
}

// exprVars is what lowered expressions read while they run. One exprVars
// belongs to one lowered function (the transition or the measurement of one
// Problem); it is not safe for concurrent use.
type exprVars struct {
	x      []float64 // the state being mapped, set per call
	k, t   float64   // step index and time k*dt, set per call
	lets   []float64 // values of let variables, by slot
	cacheK []float64 // step of each cached value; NaN before the first
	cacheV []float64 // values of subexpressions that depend on k only
}

type exprNum func(v *exprVars) float64
type exprCond func(v *exprVars) bool

// Classes of dependence on the state, for the linearity check.
const (
	noState = iota // does not read the state
	affine         // affine in the state
	nonlinear
)

// numNode is a lowered numeric expression.
type numNode struct {
	f       exprNum
	isConst bool    // f always gives c
	c       float64 // value when isConst
	state   int     // index of the state component f reads when f is just that read, else -1
	dep     int     // noState, affine or nonlinear in the state
	kdep    bool    // reads k or t
	costly  bool    // contains a function call or a power
}

type condNode struct {
	f       exprCond
	isConst bool
	c       bool
	dep     int
	kdep    bool
	costly  bool
}

// exprLowering lowers the checked trees of one function (the transition
// or the measurement) of one Problem.
type exprLowering struct {
	vars   *exprVars
	states map[string]int
	consts map[string]float64 // parameters, dt and pi
	scope  []letVar           // let variables in scope, innermost last
	nlets  int
	ncache int
}

type letVar struct {
	name string
	slot int
	node numNode // the lowered value, for its classes
}

func newExprLowering(states []string, params map[string]float64, dt float64) *exprLowering {
	l := &exprLowering{vars: &exprVars{}, states: make(map[string]int), consts: map[string]float64{"dt": dt, "pi": math.Pi}}
	for i, s := range states {
		l.states[s] = i
	}
	for p, v := range params {
		l.consts[p] = v
	}
	return l
}

// finish sizes the variables' slots once every expression is lowered.
func (l *exprLowering) finish() {
	l.vars.lets = make([]float64, l.nlets)
	l.vars.cacheK = make([]float64, l.ncache)
	l.vars.cacheV = make([]float64, l.ncache)
	for i := range l.vars.cacheK {
		l.vars.cacheK[i] = math.NaN()
	}
}

func constNum(c float64) numNode {
	return numNode{f: func(*exprVars) float64 { return c }, isConst: true, c: c, state: -1}
}

func constCond(c bool) condNode {
	return condNode{f: func(*exprVars) bool { return c }, isConst: true, c: c}
}

// fold replaces a node whose inputs are all constant by its value.
func fold(n numNode) numNode {
	if n.dep == noState && !n.kdep {
		return constNum(n.f(nil))
	}
	return n
}

// hoist caches a subexpression that depends on k (or t) only and calls a
// function, so that it is computed once per step rather than once per
// particle or sigma point. Its value is a function of k alone, so the cache
// is valid whatever the order of the calls.
func (l *exprLowering) hoist(n numNode) numNode {
	if n.isConst || n.dep != noState || !n.kdep || !n.costly {
		return n
	}
	slot := l.ncache
	l.ncache++
	f := n.f
	n.f = func(v *exprVars) float64 {
		if v.cacheK[slot] != v.k {
			v.cacheV[slot] = f(v)
			v.cacheK[slot] = v.k
		}
		return v.cacheV[slot]
	}
	n.costly = false
	return n
}

func lowerErr(n ast.Node, format string, args ...any) *exprError {
	return &exprError{from: n.Location().From, msg: fmt.Sprintf(format, args...)}
}

// num lowers a node that gives a number.
func (l *exprLowering) num(n ast.Node) (numNode, *exprError) {
	switch n := n.(type) {
	case *ast.IntegerNode:
		return constNum(float64(n.Value)), nil
	case *ast.FloatNode:
		return constNum(n.Value), nil
	case *ast.ConstantNode:
		switch c := n.Value.(type) {
		case int:
			return constNum(float64(c)), nil
		case float64:
			return constNum(c), nil
		}
	case *ast.IdentifierNode:
		return l.ident(n)
	case *ast.UnaryNode:
		switch n.Operator {
		case "-":
			a, err := l.num(n.Node)
			if err != nil {
				return a, err
			}
			f := a.f
			a.f = func(v *exprVars) float64 { return -f(v) }
			a.state = -1
			return fold(intZero(n, a)), nil
		case "+":
			return l.num(n.Node)
		}
	case *ast.BinaryNode:
		if isArith(n.Operator) {
			return l.arith(n)
		}
	case *ast.ConditionalNode:
		return l.conditional(n)
	case *ast.CallNode:
		return l.call(n)
	case *ast.VariableDeclaratorNode:
		return l.let(n)
	}
	if isCondNode(n) {
		return numNode{}, lowerErr(n, "%s gives true or false where a number is needed", quoteExprNode(n))
	}
	return numNode{}, lowerErr(n, "%s is not available in model expressions", describeNode(n))
}

// isNumNode reports whether n is a construct that gives a number.
func isNumNode(n ast.Node) bool {
	switch n := n.(type) {
	case *ast.IntegerNode, *ast.FloatNode, *ast.IdentifierNode, *ast.CallNode:
		return true
	case *ast.UnaryNode:
		return n.Operator == "-" || n.Operator == "+"
	case *ast.BinaryNode:
		return isArith(n.Operator)
	case *ast.ConditionalNode:
		return isNumNode(n.Exp1)
	case *ast.VariableDeclaratorNode:
		return isNumNode(n.Expr)
	}
	return false
}

func (l *exprLowering) ident(n *ast.IdentifierNode) (numNode, *exprError) {
	for i := len(l.scope) - 1; i >= 0; i-- {
		if lv := l.scope[i]; lv.name == n.Value {
			if lv.node.isConst {
				return constNum(lv.node.c), nil
			}
			slot := lv.slot
			node := lv.node
			node.f = func(v *exprVars) float64 { return v.lets[slot] }
			node.costly, node.state = false, -1
			return node, nil
		}
	}
	if j, ok := l.states[n.Value]; ok {
		return numNode{f: func(v *exprVars) float64 { return v.x[j] }, dep: affine, state: j}, nil
	}
	switch n.Value {
	case "k":
		return numNode{f: func(v *exprVars) float64 { return v.k }, kdep: true, state: -1}, nil
	case "t":
		return numNode{f: func(v *exprVars) float64 { return v.t }, kdep: true, state: -1}, nil
	}
	if c, ok := l.consts[n.Value]; ok {
		return constNum(c), nil
	}
	return numNode{}, lowerErr(n, "unknown name %q", n.Value)
}

func isArith(op string) bool {
	switch op {
	case "+", "-", "*", "/", "%", "^", "**":
		return true
	}
	return false
}

func (l *exprLowering) arith(n *ast.BinaryNode) (numNode, *exprError) {
	a, err := l.num(n.Left)
	if err != nil {
		return a, err
	}
	b, err := l.num(n.Right)
	if err != nil {
		return b, err
	}
	if a.dep != noState || b.dep != noState {
		a, b = l.hoist(a), l.hoist(b)
	}
	out := numNode{dep: arithDep(n.Operator, a, b), kdep: a.kdep || b.kdep, costly: a.costly || b.costly, state: -1}
	af, bf := a.f, b.f
	if f := leafArith(n.Operator, a, b); f != nil {
		// The same operation on a state component read in place: one
		// closure call fewer per operand.
		out.f = f
		return fold(intZero(n, out)), nil
	}
	switch n.Operator {
	case "+":
		switch {
		case b.isConst:
			c := b.c
			out.f = func(v *exprVars) float64 { return af(v) + c }
		case a.isConst:
			c := a.c
			out.f = func(v *exprVars) float64 { return c + bf(v) }
		default:
			out.f = func(v *exprVars) float64 { return af(v) + bf(v) }
		}
	case "-":
		switch {
		case b.isConst:
			c := b.c
			out.f = func(v *exprVars) float64 { return af(v) - c }
		case a.isConst:
			c := a.c
			out.f = func(v *exprVars) float64 { return c - bf(v) }
		default:
			out.f = func(v *exprVars) float64 { return af(v) - bf(v) }
		}
	case "*":
		switch {
		case b.isConst:
			c := b.c
			out.f = func(v *exprVars) float64 { return af(v) * c }
		case a.isConst:
			c := a.c
			out.f = func(v *exprVars) float64 { return c * bf(v) }
		default:
			out.f = func(v *exprVars) float64 { return af(v) * bf(v) }
		}
	case "/":
		switch {
		case b.isConst:
			c := b.c
			out.f = func(v *exprVars) float64 { return af(v) / c }
		case a.isConst:
			c := a.c
			out.f = func(v *exprVars) float64 { return c / bf(v) }
		default:
			out.f = func(v *exprVars) float64 { return af(v) / bf(v) }
		}
	case "%": // on integers; % on numbers is a call of mod
		out.f = func(v *exprVars) float64 { return math.Mod(af(v), bf(v)) }
	default: // "^", "**": math.Pow, as the library computes them
		out.costly = true
		switch {
		case b.isConst && b.c == 2:
			// math.Pow(a, 2) squares the fraction of frexp(a) with one
			// rounding and scales by a power of two (Go's math/pow.go), the
			// value of a*a whenever that is a normal number; below 2^-1022
			// Pow rounds a second time. TestExprLoweredEqualsVM and
			// TestExprPowSquares check the equality.
			out.f = func(v *exprVars) float64 { a := af(v); return a * a }
		case b.isConst && b.c == 3:
			out.f = func(v *exprVars) float64 { a := af(v); return a * a * a }
		case b.isConst:
			c := b.c
			out.f = func(v *exprVars) float64 { return math.Pow(af(v), c) }
		default:
			out.f = func(v *exprVars) float64 { return math.Pow(af(v), bf(v)) }
		}
	}
	return fold(intZero(n, out)), nil
}

// arithDep is the state dependence of a op b: sums of affine terms are
// affine, and so are products and quotients by terms that do not read the
// state.
func arithDep(op string, a, b numNode) int {
	d := max(a.dep, b.dep)
	switch op {
	case "+", "-":
		return d
	case "*":
		if a.dep != noState && b.dep != noState {
			return nonlinear
		}
		return d
	case "/":
		if b.dep != noState {
			return nonlinear
		}
		return d
	}
	if d != noState { // %, ^, **
		return nonlinear
	}
	return d
}

// leafArith returns the closure of a + - * / between a state component and
// a constant or another state component, or of a state component squared,
// reading the components in place; nil for other operands.
func leafArith(op string, a, b numNode) exprNum {
	i, j := a.state, b.state
	switch {
	case (op == "^" || op == "**") && i >= 0 && b.isConst && b.c == 2:
		return func(v *exprVars) float64 { x := v.x[i]; return x * x }
	case len(op) != 1 || !strings.Contains("+-*/", op):
		return nil
	case i >= 0 && b.isConst:
		o, c := op[0], b.c
		return func(v *exprVars) float64 { return applyOp(o, v.x[i], c) }
	case a.isConst && j >= 0:
		o, c := op[0], a.c
		return func(v *exprVars) float64 { return applyOp(o, c, v.x[j]) }
	case i >= 0 && j >= 0:
		o := op[0]
		return func(v *exprVars) float64 { return applyOp(o, v.x[i], v.x[j]) }
	}
	return nil
}

// applyOp is a op b for op one of + - * /.
func applyOp(op byte, a, b float64) float64 {
	switch op {
	case '+':
		return a + b
	case '-':
		return a - b
	case '*':
		return a * b
	}
	return a / b
}

// intZero makes a node of integer type give +0 where the library's integer
// arithmetic gives 0 and float64 arithmetic -0 (-0, 0*-3 or -4 % 2 written
// with integer literals; k is a float64, so only literals are integers,
// and the library's optimizer folds most such terms before the lowering
// sees them): adding 0 turns -0 into +0 and changes no other value.
// Integer results beyond ±2^53, where float64 rounds and int wraps, are not
// matched.
func intZero(n ast.Node, a numNode) numNode {
	t := n.Type()
	if t == nil || t.Kind() != reflect.Int {
		return a
	}
	switch op := nodeOperator(n); op {
	case "-", "*", "%":
		if _, unary := n.(*ast.UnaryNode); op == "-" && !unary {
			return a
		}
		f := a.f
		a.f = func(v *exprVars) float64 { return f(v) + 0 }
	}
	return a
}

func nodeOperator(n ast.Node) string {
	switch n := n.(type) {
	case *ast.UnaryNode:
		return n.Operator
	case *ast.BinaryNode:
		return n.Operator
	}
	return ""
}

func (l *exprLowering) conditional(n *ast.ConditionalNode) (numNode, *exprError) {
	c, err := l.cond(n.Cond)
	if err != nil {
		return numNode{}, err
	}
	a, err := l.num(n.Exp1)
	if err != nil {
		return a, err
	}
	b, err := l.num(n.Exp2)
	if err != nil {
		return b, err
	}
	if c.isConst {
		if c.c {
			return a, nil
		}
		return b, nil
	}
	out := numNode{dep: max(a.dep, b.dep), kdep: c.kdep || a.kdep || b.kdep, costly: c.costly || a.costly || b.costly, state: -1}
	if c.dep != noState {
		out.dep = nonlinear
		a, b = l.hoist(a), l.hoist(b)
	}
	cf, af, bf := c.f, a.f, b.f
	out.f = func(v *exprVars) float64 {
		if cf(v) {
			return af(v)
		}
		return bf(v)
	}
	return fold(out), nil
}

func (l *exprLowering) call(n *ast.CallNode) (numNode, *exprError) {
	id, ok := n.Callee.(*ast.IdentifierNode)
	if !ok {
		return numNode{}, lowerErr(n, "%s is not available in model expressions", describeNode(n))
	}
	args := make([]numNode, len(n.Arguments))
	out := numNode{costly: true, state: -1}
	for i, a := range n.Arguments {
		var err *exprError
		if args[i], err = l.num(a); err != nil {
			return numNode{}, err
		}
		out.dep = max(out.dep, args[i].dep)
		out.kdep = out.kdep || args[i].kdep
	}
	if out.dep != noState {
		out.dep = nonlinear
		for i := range args {
			args[i] = l.hoist(args[i])
		}
	}
	name := id.Value
	if f := exprFunc1(name); f != nil && len(args) == 1 {
		af := args[0].f
		out.f = func(v *exprVars) float64 { return f(af(v)) }
		return fold(out), nil
	}
	if f := exprFunc2(name); f != nil && len(args) == 2 {
		af, bf := args[0].f, args[1].f
		out.f = func(v *exprVars) float64 { return f(af(v), bf(v)) }
		return fold(out), nil
	}
	if (name == "min" || name == "max") && len(args) >= 1 {
		pick := math.Min
		if name == "max" {
			pick = math.Max
		}
		fs := make([]exprNum, len(args))
		for i := range args {
			fs[i] = args[i].f
		}
		first, rest := fs[0], fs[1:]
		out.f = func(v *exprVars) float64 {
			a := first(v)
			for _, g := range rest {
				a = pick(a, g(v))
			}
			return a
		}
		return fold(out), nil
	}
	return numNode{}, lowerErr(n, "unknown function %q", name)
}

func (l *exprLowering) let(n *ast.VariableDeclaratorNode) (numNode, *exprError) {
	if isCondNode(n.Value) {
		return numNode{}, lowerErr(n, "let %s: only numbers can be named, not true or false", n.Name)
	}
	val, err := l.num(n.Value)
	if err != nil {
		return val, err
	}
	slot := l.nlets
	l.nlets++
	l.scope = append(l.scope, letVar{name: n.Name, slot: slot, node: val})
	body, err := l.num(n.Expr)
	l.scope = l.scope[:len(l.scope)-1]
	if err != nil {
		return body, err
	}
	if val.isConst {
		return body, nil // every use was replaced by the constant
	}
	val = l.hoist(val)
	vf, bf := val.f, body.f
	body.f = func(v *exprVars) float64 {
		v.lets[slot] = vf(v)
		return bf(v)
	}
	body.kdep = body.kdep || val.kdep
	body.costly = body.costly || val.costly
	body.state = -1
	return body, nil
}

// cond lowers a node that gives true or false.
func (l *exprLowering) cond(n ast.Node) (condNode, *exprError) {
	switch n := n.(type) {
	case *ast.BoolNode:
		return constCond(n.Value), nil
	case *ast.ConstantNode:
		if b, ok := n.Value.(bool); ok {
			return constCond(b), nil
		}
	case *ast.UnaryNode:
		if n.Operator == "!" || n.Operator == "not" {
			a, err := l.cond(n.Node)
			if err != nil {
				return a, err
			}
			if a.isConst {
				return constCond(!a.c), nil
			}
			f := a.f
			a.f = func(v *exprVars) bool { return !f(v) }
			return a, nil
		}
	case *ast.BinaryNode:
		switch n.Operator {
		case "and", "&&", "or", "||":
			return l.logic(n)
		case "==", "!=", "<", ">", "<=", ">=":
			return l.compare(n)
		}
	case *ast.ConditionalNode:
		c, err := l.cond(n.Cond)
		if err != nil {
			return c, err
		}
		a, err := l.cond(n.Exp1)
		if err != nil {
			return a, err
		}
		b, err := l.cond(n.Exp2)
		if err != nil {
			return b, err
		}
		if c.isConst {
			if c.c {
				return a, nil
			}
			return b, nil
		}
		cf, af, bf := c.f, a.f, b.f
		return condNode{
			f: func(v *exprVars) bool {
				if cf(v) {
					return af(v)
				}
				return bf(v)
			},
			dep: max(c.dep, a.dep, b.dep), kdep: c.kdep || a.kdep || b.kdep, costly: c.costly || a.costly || b.costly,
		}, nil
	}
	if isNumNode(n) {
		return condNode{}, lowerErr(n, "%s is a number where true or false is needed", quoteExprNode(n))
	}
	return condNode{}, lowerErr(n, "%s is not available in model expressions", describeNode(n))
}

func (l *exprLowering) logic(n *ast.BinaryNode) (condNode, *exprError) {
	a, err := l.cond(n.Left)
	if err != nil {
		return a, err
	}
	b, err := l.cond(n.Right)
	if err != nil {
		return b, err
	}
	and := n.Operator == "and" || n.Operator == "&&"
	if a.isConst {
		if a.c == and { // true and b, false or b
			return b, nil
		}
		return constCond(a.c), nil
	}
	out := condNode{dep: max(a.dep, b.dep), kdep: a.kdep || b.kdep, costly: a.costly || b.costly}
	af, bf := a.f, b.f
	if and {
		out.f = func(v *exprVars) bool { return af(v) && bf(v) }
	} else {
		out.f = func(v *exprVars) bool { return af(v) || bf(v) }
	}
	return out, nil
}

func (l *exprLowering) compare(n *ast.BinaryNode) (condNode, *exprError) {
	a, err := l.num(n.Left)
	if err != nil {
		return condNode{}, err
	}
	b, err := l.num(n.Right)
	if err != nil {
		return condNode{}, err
	}
	if a.dep != noState || b.dep != noState {
		a, b = l.hoist(a), l.hoist(b)
	}
	out := condNode{dep: max(a.dep, b.dep), kdep: a.kdep || b.kdep, costly: a.costly || b.costly}
	af, bf := a.f, b.f
	switch n.Operator {
	case "==":
		out.f = func(v *exprVars) bool { return af(v) == bf(v) }
	case "!=":
		out.f = func(v *exprVars) bool { return af(v) != bf(v) }
	case "<":
		out.f = func(v *exprVars) bool { return af(v) < bf(v) }
	case ">":
		out.f = func(v *exprVars) bool { return af(v) > bf(v) }
	case "<=":
		out.f = func(v *exprVars) bool { return af(v) <= bf(v) }
	default:
		out.f = func(v *exprVars) bool { return af(v) >= bf(v) }
	}
	if out.dep == noState && !out.kdep {
		return constCond(out.f(nil)), nil
	}
	return out, nil
}

// isCondNode reports whether n gives true or false.
func isCondNode(n ast.Node) bool {
	switch n := n.(type) {
	case *ast.BoolNode:
		return true
	case *ast.UnaryNode:
		return n.Operator == "!" || n.Operator == "not"
	case *ast.BinaryNode:
		switch n.Operator {
		case "and", "&&", "or", "||", "==", "!=", "<", ">", "<=", ">=":
			return true
		}
	case *ast.ConditionalNode:
		return isCondNode(n.Exp1)
	}
	return false
}

// quoteExprNode is n's source form, quoted, shortened when long.
func quoteExprNode(n ast.Node) string {
	s := []rune(n.String())
	if len(s) > 40 {
		s = append(s[:37], []rune("...")...)
	}
	return strconv.Quote(string(s))
}

// describeNode names the construct of a node the models do not support.
func describeNode(n ast.Node) string {
	switch n := n.(type) {
	case *ast.BinaryNode:
		return fmt.Sprintf("the operator %q", n.Operator)
	case *ast.UnaryNode:
		return fmt.Sprintf("the operator %q", n.Operator)
	case *ast.StringNode, *ast.BytesNode:
		return "text " + quoteExprNode(n)
	case *ast.NilNode:
		return "nil"
	case *ast.ArrayNode, *ast.ConstantNode:
		return "a list"
	case *ast.MapNode:
		return "a map"
	case *ast.MemberNode, *ast.ChainNode:
		return "a field or index " + quoteExprNode(n)
	case *ast.SliceNode:
		return "a slice " + quoteExprNode(n)
	case *ast.SequenceNode:
		return "a sequence of expressions (;)"
	}
	return quoteExprNode(n)
}

// exprFunction is one lowered vector function: the transition or the
// measurement of one Problem.
type exprFunction struct {
	vars *exprVars
	fns  []exprNum
	dt   float64
}

// eval writes the function of x at step k into dst. It does not allocate.
func (e *exprFunction) eval(dst, x []float64, k int) {
	v := e.vars
	v.x = x
	v.k = float64(k)
	v.t = float64(k) * e.dt
	for i, f := range e.fns {
		dst[i] = f(v)
	}
}

// evalMany applies eval to the states stored one after another in x
// (Model.FMany, Model.HMany): nx values each, writing len(fns) values per
// state into dst. It saves a call through the model per particle.
func (e *exprFunction) evalMany(nx int) func(dst, x []float64, k int) {
	return func(dst, x []float64, k int) {
		v := e.vars
		v.k = float64(k)
		v.t = float64(k) * e.dt
		nf := len(e.fns)
		for i, j := 0, 0; i+nx <= len(x); i, j = i+nx, j+nf {
			v.x = x[i : i+nx]
			out := dst[j : j+nf]
			for c, f := range e.fns {
				out[c] = f(v)
			}
		}
	}
}

// lowerFunction lowers the checked programs of one function with the given
// parameter values. It reports whether every component is affine in the
// state.
func lowerFunction(progs []*vm.Program, states []string, params map[string]float64, dt float64) (*exprFunction, bool, int, *exprError) {
	l := newExprLowering(states, params, dt)
	e := &exprFunction{vars: l.vars, fns: make([]exprNum, len(progs)), dt: dt}
	lin := true
	for i, p := range progs {
		if isCondNode(p.Node()) {
			return nil, false, i, &exprError{from: -1, msg: "gives true or false, not a number"}
		}
		n, err := l.num(p.Node())
		if err != nil {
			return nil, false, i, err
		}
		n = l.hoist(n)
		e.fns[i] = n.f
		lin = lin && n.dep != nonlinear
	}
	l.finish()
	return e, lin, 0, nil
}

// exprModel is a model defined in a suite file by expressions: a
// [[problem]] table with model = "expr", checked and compiled.
type exprModel struct {
	name         string
	states       []string
	measurements []string
	paramNames   []string  // sorted
	paramValues  []float64 // in the order of paramNames
	transition   []string  // one expression per state, as written (trimmed)
	measurement  []string  // one expression per measurement
	q, r         []float64 // noise covariances, row-major
	x0, p0       []float64 // prior mean and covariance
	steps        int
	dt           float64
	scored       []string
	angles       []string
	// differentiable is the table's declaration (default true).
	differentiable bool

	progF, progH []*vm.Program // checked trees, shared read-only by every Build
	linear       bool          // every expression is affine in the state
}

// specParams are the spec parameters of an expression model: steps, dt
// and its named parameters, each defaulting to the table's value.
func (m *exprModel) specParams() []Param {
	ps := []Param{
		{Name: "steps", Kind: Int, Default: Value{Num: float64(m.steps)}, Doc: "number of time steps", Min: 1, Max: 1e7},
		{Name: "dt", Kind: Float, Default: Value{Num: m.dt}, Doc: "time between steps", Min: exprMinDt, Max: exprMaxDt},
	}
	for i, name := range m.paramNames {
		ps = append(ps, Param{Name: name, Kind: Float, Default: Value{Num: m.paramValues[i]}, Doc: "parameter of the expressions"})
	}
	return ps
}

// Bounds of dt, as for the built-in problems' sampling periods.
const (
	exprMinDt = 1e-9
	exprMaxDt = 1e9
)

// spec returns the catalogue entry of the model; src names the table
// ("suite.toml:12") in its summary.
func (m *exprModel) spec(src string) *ProblemSpec {
	return &ProblemSpec{
		Name:    m.name,
		Summary: fmt.Sprintf("expression model, %d states, %d measurements", len(m.states), len(m.measurements)),
		Source:  "suite file " + src,
		Params:  m.specParams(),
		Build:   m.build,
	}
}

// build makes a Problem of the model with the parameter values v. Each call
// lowers the checked trees anew, so each Problem (each worker's) has its own
// variables.
func (m *exprModel) build(v Values) (*datasets.Problem, error) {
	params := make(map[string]float64, len(m.paramNames))
	for _, name := range m.paramNames {
		params[name] = v.Float(name)
	}
	steps, dt := v.Int("steps"), v.Float("dt")
	if steps < 1 || !(dt >= exprMinDt && dt <= exprMaxDt) {
		return nil, fmt.Errorf("bench: expression model %s: steps %d or dt %v out of range", m.name, steps, dt)
	}
	f, linF, i, err := lowerFunction(m.progF, m.states, params, dt)
	if err != nil {
		return nil, fmt.Errorf("bench: expression model %s: transition of %s: %s", m.name, m.states[i], err.msg)
	}
	h, linH, i, err := lowerFunction(m.progH, m.states, params, dt)
	if err != nil {
		return nil, fmt.Errorf("bench: expression model %s: measurement %s: %s", m.name, m.measurements[i], err.msg)
	}
	nx, nz := len(m.states), len(m.measurements)
	p := &datasets.Problem{
		Name: m.name,
		Model: filters.Model{
			Nx: nx, Nz: nz,
			F:      f.eval,
			H:      h.eval,
			FMany:  f.evalMany(nx),
			HMany:  h.evalMany(nx),
			Q:      append([]float64(nil), m.q...),
			R:      append([]float64(nil), m.r...),
			Linear: linF && linH,
		},
		X0:    append([]float64(nil), m.x0...),
		P0:    append([]float64(nil), m.p0...),
		Steps: steps,
		Dt:    dt,
		Traits: datasets.Traits{
			Linear:         linF && linH,
			Differentiable: m.differentiable,
			AdditiveNoise:  true,
			GaussianNoise:  true,
		},
	}
	if !m.differentiable {
		p.Traits.NonDifferentiable = "is declared not differentiable (differentiable = false)"
	}
	for _, s := range m.scored {
		p.Scored = append(p.Scored, slices.Index(m.states, s))
	}
	for _, a := range m.angles {
		if i := slices.Index(m.states, a); i >= 0 {
			p.Model.AngleState = append(p.Model.AngleState, i)
		} else {
			p.Model.AngleMeas = append(p.Model.AngleMeas, slices.Index(m.measurements, a))
		}
	}
	return p, nil
}
