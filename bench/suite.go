package bench

import (
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"
	"time"

	"github.com/BurntSushi/toml"
)

// Defaults and limits of a suite file. maxSweep is our own limit (common
// practice, no source): a sweep larger than it is more likely a slip than a
// plan, and the limit keeps parsing hostile input cheap.
const (
	defaultSuiteSeed = 1
	defaultSuiteRuns = 100
	maxSweep         = 10000   // configurations one [[problem]] or [[filter]] table may expand to
	maxExactInt      = 1 << 53 // largest integer a Value holds exactly
)

// Suite is a parsed suite file: what to run, how often, from which seed.
type Suite struct {
	File     string // path shown in messages ("" for built-in)
	Name     string
	Seed     uint64
	Runs     int
	Problems []ProblemConfig // sweeps expanded, in file order
	// Filters has sweeps expanded, in file order; within a sweep in list
	// order, as a cartesian product when several keys are lists, the key
	// written later varying fastest.
	Filters []FilterConfig
}

// ProblemConfig is one problem with a full set of parameter values.
type ProblemConfig struct {
	Spec   *ProblemSpec
	Values Values // every parameter of Spec: defaults, then the file's values
	Line   int    // line of the [[problem]] header

	expr *exprModel // the model of a model = "expr" table; nil for a catalogue problem
}

// FilterConfig is one filter with a full set of parameter values.
type FilterConfig struct {
	Spec   *FilterSpec
	Values Values // every parameter of Spec: defaults, then the file's values
	Config string // ConfigString(Spec.Params, Values): the values that differ from the defaults
	Line   int    // line of the [[filter]] header
}

// SuiteError is a mistake in a suite file, at a line. Key names where in
// the file the mistake is: a top-level key ("runs"), or a table ("problem",
// `filter "pf"`); it is empty for mistakes of the file as a whole.
type SuiteError struct {
	File string // "" for the built-in suite
	Line int    // 1-based; 0 when the mistake has no single line (a missing key)
	Key  string
	Msg  string
}

// Error formats e as file:line: key: message, leaving out the parts that
// are empty or zero.
func (e *SuiteError) Error() string {
	var b strings.Builder
	if e.File == "" {
		b.WriteString("built-in suite")
	} else {
		b.WriteString(e.File)
	}
	if e.Line > 0 {
		b.WriteString(":" + strconv.Itoa(e.Line))
	}
	b.WriteString(": ")
	if e.Key != "" {
		b.WriteString(e.Key + ": ")
	}
	b.WriteString(e.Msg)
	return b.String()
}

// ParseSuite reads the suite file data against the catalogue cat. file is
// the path used in messages. A suite file is TOML:
//
//	name = "harbour-radar"   # required
//	seed = 7                 # uint64, default 1
//	runs = 200               # Monte Carlo runs, default 100
//	[[problem]]
//	use = "ungm"             # a problem of the catalogue
//	steps = 150              # any parameter of that problem
//	[[filter]]
//	use = "pf"
//	particles = [250, 1000]  # a list sweeps: one configuration per value
//
// Problems sweep the same way as filters; a parameter left out takes its
// default. A [[problem]] table with model = "expr" instead of use defines a
// model by expressions (exprProblem in suite_expr.go; README, "Models
// defined in the suite file"); it does not sweep. Int parameters take TOML integers only (500.0 is refused), Float
// parameters integers or finite floats (-0 reads as 0), String parameters
// strings. The same configuration twice is refused, naming both lines.
//
// Every error ParseSuite returns is a *SuiteError. It is the first mistake
// in file order, except that a table's use key is checked before its other
// keys, whose meaning depends on it, and that missing keys are reported after
// everything else. A mistake inside a list that spans lines is reported at
// the line of its key.
func ParseSuite(file string, data []byte, cat *Catalogue) (*Suite, error) {
	if cat == nil {
		panic("bench: ParseSuite: nil catalogue")
	}
	var raw map[string]any
	md, err := toml.Decode(string(data), &raw)
	if err != nil {
		var pe toml.ParseError
		if errors.As(err, &pe) {
			return nil, &SuiteError{File: file, Line: max(pe.Position.Line, 0), Msg: tomlMessage(pe)}
		}
		return nil, &SuiteError{File: file, Msg: err.Error()}
	}
	p := &suiteParser{
		file:  file,
		cat:   cat,
		lines: scanSuiteLines(data),
		order: suiteKeyOrder(md, raw),
		seen:  make(map[string]seenConfig),
		suite: &Suite{File: file, Seed: defaultSuiteSeed, Runs: defaultSuiteRuns},
	}
	if err := p.parse(raw); err != nil {
		return nil, err
	}
	return p.suite, nil
}

// tomlMessage is the decoder's message without its own "toml: line n" prefix.
func tomlMessage(pe toml.ParseError) string {
	msg := pe.Message
	if pe.Usage != "" {
		// The usage text is several lines of guidance; its first line is enough.
		first, _, _ := strings.Cut(strings.TrimSpace(pe.Usage), "\n")
		msg += " (" + strings.TrimSpace(first) + ")"
	}
	return "TOML syntax: " + msg
}

// suiteParser holds the state of one ParseSuite call.
type suiteParser struct {
	file  string
	cat   *Catalogue
	lines suiteLines
	order suiteOrder
	seen  map[string]seenConfig // canonical text of each configuration so far
	ntab  int                   // tables read so far
	suite *Suite
}

func (p *suiteParser) errorf(line int, key, format string, args ...any) *SuiteError {
	return &SuiteError{File: p.file, Line: line, Key: key, Msg: fmt.Sprintf(format, args...)}
}

var suiteTopKeys = []string{"name", "seed", "runs", "problem", "filter"}

func (p *suiteParser) parse(raw map[string]any) error {
	named := false
	for _, e := range p.order.events {
		key, v := e.key, raw[e.key]
		if e.index >= 0 {
			elem := tableElem(v, e.index)
			keys := p.order.elemKeys(e, elem)
			var err error
			if key == "problem" {
				err = p.problem(e.index, elem, keys)
			} else {
				err = p.filter(e.index, elem, keys)
			}
			if err != nil {
				return err
			}
			continue
		}
		line := p.lines.top[key]
		switch key {
		case "name":
			s, ok := v.(string)
			if !ok {
				return p.errorf(line, key, "expected string, got %s", tomlTypeName(v))
			}
			if strings.TrimSpace(s) == "" {
				return p.errorf(line, key, "must not be empty")
			}
			p.suite.Name, named = s, true
		case "seed":
			n, ok := v.(int64)
			if !ok {
				return p.errorf(line, key, "expected integer, got %s", tomlTypeName(v))
			}
			if n < 0 {
				return p.errorf(line, key, "must be at least 0, got %d", n)
			}
			p.suite.Seed = uint64(n)
		case "runs":
			n, ok := v.(int64)
			switch {
			case !ok:
				return p.errorf(line, key, "expected integer, got %s", tomlTypeName(v))
			case n < 1:
				return p.errorf(line, key, "must be at least 1, got %d", n)
			case n > math.MaxInt32:
				return p.errorf(line, key, "must be at most %d, got %d", math.MaxInt32, n)
			}
			p.suite.Runs = int(n)
		case "problem", "filter":
			if err := p.checkTables(key, v); err != nil {
				return err
			}
		default:
			return p.errorf(line, "", "unknown key %q%s", key, hint(key, suiteTopKeys, "valid keys"))
		}
	}
	switch {
	case !named:
		return p.errorf(0, "name", `missing; every suite needs one, such as name = "harbour-radar"`)
	case len(p.suite.Problems) == 0:
		return p.errorf(0, "problem", "none given; add at least one [[problem]] table")
	case len(p.suite.Filters) == 0:
		return p.errorf(0, "filter", "none given; add at least one [[filter]] table")
	}
	return nil
}

// checkTables checks that v, the value of the top-level key, is a list of
// tables: [[key]] tables or an inline array of inline tables.
func (p *suiteParser) checkTables(key string, v any) error {
	switch v := v.(type) {
	case []map[string]any:
		return nil
	case []any:
		for _, e := range v {
			if _, ok := e.(map[string]any); !ok {
				return p.errorf(p.lines.top[key], key, "expected [[%s]] tables, got list containing %s", key, tomlTypeName(e))
			}
		}
		return nil
	}
	return p.errorf(p.lines.top[key], key, "expected [[%s]] tables, got %s", key, tomlTypeName(v))
}

// tableElem returns element i of a list of tables checked by checkTables.
func tableElem(v any, i int) map[string]any {
	switch v := v.(type) {
	case []map[string]any:
		return v[i]
	case []any:
		return v[i].(map[string]any)
	}
	panic("bench: suite table is not a list of tables")
}

func (p *suiteParser) problem(i int, elem map[string]any, keys []string) error {
	if _, ok := elem["model"]; ok {
		return p.exprProblem(i, elem, keys)
	}
	name, line, err := p.use("problem", i, elem)
	if err != nil {
		return err
	}
	spec, ok := p.cat.Problem(name)
	if !ok {
		var names []string
		for _, s := range p.cat.Problems {
			names = append(names, s.Name)
		}
		return p.errorf(line, "problem", "unknown problem %q%s", name, hint(name, names, "known problems"))
	}
	ctx := fmt.Sprintf("problem %q", name)
	return p.expand("problem", i, ctx, spec.Name, spec.Params, elem, keys, func(v Values, line int) {
		p.suite.Problems = append(p.suite.Problems, ProblemConfig{Spec: spec, Values: v, Line: line})
	})
}

func (p *suiteParser) filter(i int, elem map[string]any, keys []string) error {
	name, line, err := p.use("filter", i, elem)
	if err != nil {
		return err
	}
	spec, ok := p.cat.Filter(name)
	if !ok {
		var names []string
		for _, s := range p.cat.Filters {
			names = append(names, s.Name)
		}
		return p.errorf(line, "filter", "unknown filter %q%s", name, hint(name, names, "known filters"))
	}
	ctx := fmt.Sprintf("filter %q", name)
	return p.expand("filter", i, ctx, spec.Name, spec.Params, elem, keys, func(v Values, line int) {
		p.suite.Filters = append(p.suite.Filters, FilterConfig{Spec: spec, Values: v, Config: ConfigString(spec.Params, v), Line: line})
	})
}

// use returns the use key of element i of table, and its line.
func (p *suiteParser) use(table string, i int, elem map[string]any) (string, int, error) {
	v, ok := elem["use"]
	if !ok {
		or := ""
		if table == "problem" {
			or = `, or model = "expr" for a model defined in the file`
		}
		return "", 0, p.errorf(p.lines.tableLine(table, i), table, `missing "use" (the name of a %s in the catalogue%s)`, table, or)
	}
	line := p.lines.keyLine(table, i, "use")
	s, ok := v.(string)
	if !ok {
		return "", 0, p.errorf(line, table, "use: expected string, got %s", tomlTypeName(v))
	}
	return s, line, nil
}

// seenConfig is where a configuration was first given.
type seenConfig struct {
	line  int // line of its table
	table int // the table's ordinal in the file
}

// sweepKey is one parameter key of a table with its values (one unless the
// file gave a list).
type sweepKey struct {
	param  *Param
	values []Value
}

// expand checks the keys of element i of table (a spec with params, named
// ctx in messages), expands its sweeps and hands each configuration to add
// after checking it against the configurations before it.
func (p *suiteParser) expand(table string, i int, ctx, specName string, params []Param, elem map[string]any, keys []string, add func(Values, int)) error {
	var sweep []sweepKey
	total := 1
	for _, key := range keys {
		if key == "use" {
			continue
		}
		line := p.lines.keyLine(table, i, key)
		j := slices.IndexFunc(params, func(q Param) bool { return q.Name == key })
		if j < 0 {
			valid := []string{"use"}
			for _, q := range params {
				valid = append(valid, q.Name)
			}
			return p.errorf(line, ctx, "unknown key %q%s", key, hint(key, valid, "valid keys"))
		}
		values, msg := paramValues(&params[j], elem[key])
		if msg != "" {
			return p.errorf(line, ctx, "%s", msg)
		}
		if total *= len(values); total > maxSweep {
			return p.errorf(line, ctx, "the sweep gives more than %d configurations; split it into several tables or suites", maxSweep)
		}
		sweep = append(sweep, sweepKey{&params[j], values})
	}
	line := p.lines.tableLine(table, i)
	p.ntab++
	idx := make([]int, len(sweep)) // odometer over the sweep's lists, last key fastest
	for {
		v := Defaults(params)
		for k, s := range sweep {
			v[s.param.Name] = s.values[idx[k]]
		}
		var b strings.Builder
		b.WriteString(table + "\x00")
		writeConfig(&b, specName, params, v)
		id := b.String()
		if prev, dup := p.seen[id]; dup {
			what := "duplicate default configuration"
			if c := ConfigString(params, v); c != "" {
				what = fmt.Sprintf("duplicate configuration %q", c)
			}
			if prev.table == p.ntab {
				return p.errorf(line, ctx, "%s (the sweep lists a value twice)", what)
			}
			return p.errorf(line, ctx, "%s (also at line %d)", what, prev.line)
		}
		p.seen[id] = seenConfig{line, p.ntab}
		add(v, line)
		k := len(idx) - 1
		for ; k >= 0; k-- {
			if idx[k]++; idx[k] < len(sweep[k].values) {
				break
			}
			idx[k] = 0
		}
		if k < 0 {
			return nil
		}
	}
}

// paramValues converts the TOML value v of parameter q: a single value or a
// non-empty list (a sweep). On a mistake it returns the message.
func paramValues(q *Param, v any) ([]Value, string) {
	plural := map[Kind]string{Int: "integers", Float: "numbers", String: "strings"}[q.Kind]
	typeMsg := func(got string) string {
		return fmt.Sprintf("%s: expected %s or list of %s, got %s", q.Name, q.Kind, plural, got)
	}
	list, isList := v.([]any)
	if !isList {
		list = []any{v}
	} else if len(list) == 0 {
		return nil, q.Name + ": empty list (a sweep needs at least one value)"
	}
	values := make([]Value, len(list))
	for k, e := range list {
		var val Value
		switch x := e.(type) {
		case int64:
			if q.Kind == String {
				return nil, typeMsg(describeElem(isList, e))
			}
			if q.Kind == Int && (x > maxExactInt || x < -maxExactInt) {
				return nil, fmt.Sprintf("%s: %d is too large; integers must be within ±2^53", q.Name, x)
			}
			val.Num = float64(x)
		case float64:
			switch {
			case q.Kind == String:
				return nil, typeMsg(describeElem(isList, e))
			case q.Kind == Int:
				return nil, fmt.Sprintf("%s must be an integer, got %s", q.Name, formatTOMLFloat(x))
			case math.IsNaN(x) || math.IsInf(x, 0):
				return nil, fmt.Sprintf("%s must be a finite number, got %s", q.Name, formatTOMLFloat(x))
			}
			val.Num = x + 0 // -0 reads as 0, so that equal values print alike
		case string:
			if q.Kind != String {
				return nil, typeMsg(describeElem(isList, e))
			}
			val.Str = x
		default:
			return nil, typeMsg(describeElem(isList, e))
		}
		if err := q.check(val); err != nil {
			return nil, err.Error()
		}
		values[k] = val
	}
	return values, ""
}

func describeElem(inList bool, v any) string {
	if inList {
		return "list containing " + tomlTypeName(v)
	}
	return tomlTypeName(v)
}

// tomlTypeName names the TOML type of a decoded value.
func tomlTypeName(v any) string {
	switch v.(type) {
	case int64:
		return "integer"
	case float64:
		return "float"
	case string:
		return "string"
	case bool:
		return "boolean"
	case time.Time:
		return "date-time"
	case []any:
		return "list"
	case []map[string]any:
		return "list of tables"
	case map[string]any:
		return "table"
	}
	return fmt.Sprintf("%T", v)
}

// hint is the parenthesised end of an unknown-name message: the nearest
// valid name, or the whole list when none is near.
func hint(name string, valid []string, what string) string {
	if s := Suggest(name, valid); s != "" {
		return fmt.Sprintf(" (did you mean %q?)", s)
	}
	if len(valid) == 0 {
		return " (the catalogue has none)"
	}
	return " (" + what + ": " + strings.Join(valid, ", ") + ")"
}

// Suggest returns the name of valid nearest to name, or "" when none is
// near. A name is near when its restricted Damerau-Levenshtein distance to
// name, ignoring case, is at most 2 (at most 1 for names of one or two
// letters), or when the two share a prefix of at least 3 letters. Nearer
// distances win, then longer shared prefixes, then the earlier name.
func Suggest(name string, valid []string) string {
	a := []rune(strings.ToLower(name))
	best, bestDist, bestPre := "", math.MaxInt, 0
	for _, v := range valid {
		b := []rune(strings.ToLower(v))
		d := editDistance(a, b)
		pre := 0
		for pre < len(a) && pre < len(b) && a[pre] == b[pre] {
			pre++
		}
		limit := 2
		if len(a) <= 2 || len(b) <= 2 {
			limit = 1
		}
		if d > limit && pre < 3 {
			continue
		}
		if d < bestDist || d == bestDist && pre > bestPre {
			best, bestDist, bestPre = v, d, pre
		}
	}
	return best
}

// editDistance is the optimal string alignment distance between a and b:
// insertions, deletions, substitutions and transpositions of adjacent
// letters, no substring edited twice (the restricted Damerau-Levenshtein
// distance).
func editDistance(a, b []rune) int {
	// Three rows of the dynamic programme: i-2, i-1 and i.
	prev2 := make([]int, len(b)+1)
	prev := make([]int, len(b)+1)
	cur := make([]int, len(b)+1)
	for j := range prev {
		prev[j] = j
	}
	for i := 1; i <= len(a); i++ {
		cur[0] = i
		for j := 1; j <= len(b); j++ {
			cost := 1
			if a[i-1] == b[j-1] {
				cost = 0
			}
			cur[j] = min(prev[j]+1, cur[j-1]+1, prev[j-1]+cost)
			if i > 1 && j > 1 && a[i-1] == b[j-2] && a[i-2] == b[j-1] {
				cur[j] = min(cur[j], prev2[j-2]+1)
			}
		}
		prev2, prev, cur = prev, cur, prev2
	}
	return prev[len(b)]
}

// Canonical returns the suite as TOML text that depends only on what the
// suite runs: name, seed, runs, then every configuration in order, one table
// each with sweeps expanded, keys sorted, every value written including
// defaults, floats in the shortest form that reads back to the same bits.
// Comments, whitespace, key order and the way sweeps were written leave it
// unchanged. The text is itself a suite file that parses to the same suite.
func (s *Suite) Canonical() []byte {
	var b strings.Builder
	b.WriteString("# estbench canonical suite, format 1\n")
	b.WriteString("name = " + quoteTOML(s.Name) + "\n")
	b.WriteString("seed = " + strconv.FormatUint(s.Seed, 10) + "\n")
	b.WriteString("runs = " + strconv.Itoa(s.Runs) + "\n")
	for _, c := range s.Problems {
		b.WriteString("\n[[problem]]\n")
		if c.expr != nil {
			writeExprConfig(&b, c.expr, c.Values)
			continue
		}
		writeConfig(&b, c.Spec.Name, c.Spec.Params, c.Values)
	}
	for _, c := range s.Filters {
		b.WriteString("\n[[filter]]\n")
		writeConfig(&b, c.Spec.Name, c.Spec.Params, c.Values)
	}
	return []byte(b.String())
}

// Hash returns the hex SHA-256 of s.Canonical().
func (s *Suite) Hash() string {
	sum := sha256.Sum256(s.Canonical())
	return hex.EncodeToString(sum[:])
}

// writeConfig writes the use line and the values of params in v, sorted by
// name, as TOML key = value lines.
func writeConfig(b *strings.Builder, use string, params []Param, v Values) {
	b.WriteString("use = " + quoteTOML(use) + "\n")
	sorted := slices.Clone(params)
	slices.SortFunc(sorted, func(x, y Param) int { return strings.Compare(x.Name, y.Name) })
	for _, q := range sorted {
		val, ok := v[q.Name]
		if !ok {
			continue
		}
		b.WriteString(keyTOML(q.Name) + " = ")
		switch q.Kind {
		case Int:
			b.WriteString(strconv.FormatInt(int64(val.Num), 10))
		case Float:
			b.WriteString(formatTOMLFloat(val.Num))
		default:
			b.WriteString(quoteTOML(val.Str))
		}
		b.WriteByte('\n')
	}
}

// formatTOMLFloat writes f as a TOML float: the shortest decimal that reads
// back to f, with ".0" added when it would otherwise read as an integer.
func formatTOMLFloat(f float64) string {
	switch {
	case math.IsNaN(f):
		return "nan"
	case math.IsInf(f, 1):
		return "inf"
	case math.IsInf(f, -1):
		return "-inf"
	}
	s := strconv.FormatFloat(f, 'g', -1, 64)
	if !strings.ContainsAny(s, ".e") {
		s += ".0"
	}
	return s
}

// keyTOML writes k as a bare TOML key when it can be one, else quoted.
func keyTOML(k string) string {
	if k == "" {
		return `""`
	}
	for _, r := range k {
		if !(r >= 'A' && r <= 'Z' || r >= 'a' && r <= 'z' || r >= '0' && r <= '9' || r == '_' || r == '-') {
			return quoteTOML(k)
		}
	}
	return k
}

// quoteTOML writes s as a TOML basic string. Unlike strconv.Quote it uses
// only escapes TOML has (\" \\ \uXXXX); invalid UTF-8 becomes U+FFFD.
func quoteTOML(s string) string {
	var b strings.Builder
	b.WriteByte('"')
	for _, r := range s {
		switch {
		case r == '"' || r == '\\':
			b.WriteByte('\\')
			b.WriteRune(r)
		case r < 0x20 || r == 0x7f:
			fmt.Fprintf(&b, `\u%04X`, r)
		default: // ranging over s gives utf8.RuneError for an invalid byte
			b.WriteRune(r)
		}
	}
	b.WriteByte('"')
	return b.String()
}

// suiteOrder is the order of a suite file's contents, from the decoder's
// metadata (Go maps have none).
type suiteOrder struct {
	events []suiteEvent // top-level keys and tables, in file order
	keys   [][]string   // keys of each table event, in file order
}

// suiteEvent is a top-level key (index -1) or element index of the list of
// tables key.
type suiteEvent struct {
	key   string
	index int
	order int // index into suiteOrder.keys, -1 when unknown
}

// suiteKeyOrder reads the order from md. The decoder lists a [[t]] table as
// the key t followed by the table's keys; an inline array of inline tables
// as t followed by all their keys, which are split among the elements by
// each element's size. Where the metadata do not account for exactly the
// keys of an element, elemKeys falls back to sorted order.
func suiteKeyOrder(md toml.MetaData, raw map[string]any) suiteOrder {
	var o suiteOrder
	seen := make(map[string]int) // occurrences of each top-level key
	var inline map[string][]string
	cur := -1 // index into o.keys of the [[t]] table being read
	for _, k := range md.Keys() {
		switch len(k) {
		case 1:
			name := k[0]
			cur = -1
			n := seen[name]
			seen[name]++
			isTables := name == "problem" || name == "filter"
			switch typ := md.Type(name); {
			case isTables && typ == "ArrayHash":
				if list, ok := raw[name].([]map[string]any); !ok || n >= len(list) {
					continue // not expected from the decoder; leaves nothing to index out of range
				}
				cur = len(o.keys)
				o.events = append(o.events, suiteEvent{key: name, index: n, order: cur})
				o.keys = append(o.keys, nil)
			case n > 0:
				// A key seen before, such as [t] after [t.sub].
			case isTables && typ == "Array":
				o.events = append(o.events, suiteEvent{key: name, index: -1})
				list, _ := raw[name].([]any)
				if inline == nil {
					inline = make(map[string][]string)
				}
				for i, e := range list {
					if _, ok := e.(map[string]any); ok {
						o.events = append(o.events, suiteEvent{key: name, index: i, order: -1})
					}
				}
			default:
				o.events = append(o.events, suiteEvent{key: name, index: -1})
			}
		case 2:
			if cur >= 0 {
				o.keys[cur] = append(o.keys[cur], k[1])
			} else if inline != nil && md.Type(k[0]) == "Array" {
				inline[k[0]] = append(inline[k[0]], k[1])
			}
		}
	}
	// Split the keys of inline tables among the elements, in element order.
	for j := range o.events {
		e := &o.events[j]
		keys, ok := inline[e.key]
		if !ok || e.index < 0 {
			continue
		}
		m, _ := raw[e.key].([]any)[e.index].(map[string]any)
		n := min(len(m), len(keys))
		e.order = len(o.keys)
		o.keys = append(o.keys, keys[:n])
		inline[e.key] = keys[n:]
	}
	return o
}

// elemKeys returns the keys of table event e, whose value is elem, in file
// order.
func (o *suiteOrder) elemKeys(e suiteEvent, elem map[string]any) []string {
	if e.order >= 0 {
		keys := o.keys[e.order]
		distinct := make(map[string]bool, len(keys))
		for _, k := range keys {
			if _, in := elem[k]; in {
				distinct[k] = true
			}
		}
		if len(distinct) == len(keys) && len(keys) == len(elem) {
			return keys
		}
	}
	keys := make([]string, 0, len(elem))
	for k := range elem {
		keys = append(keys, k)
	}
	slices.Sort(keys)
	return keys
}

// suiteLines holds the line of each key of a suite file. The TOML decoder
// reports no positions for valid keys, so a small scanner finds them: it
// follows table headers ([[problem]], [[filter]] with their occurrence
// index, [table]) and key = value lines, skipping comments, strings
// (including multi-line ones) and values that run over several lines
// (arrays, inline tables); a key's line is where its value starts.
//
// Limits: it reads only files the decoder accepted, so it need not detect
// errors. A dotted key (a.b = 1) is recorded under its first part. Keys
// inside inline tables and [t.sub] tables have no line of their own; lookups
// fall back to the line of the enclosing table header or key. For a list
// value of a table key it also records the line where each string or
// bracketed element starts (expressions, matrix rows); numbers are not
// recorded, so elemLine falls back to the key's line for lists of numbers.
type suiteLines struct {
	top    map[string]int         // first line of each top-level key or table header
	tables map[string][]tableLine // each [[name]] table, in order
}

type tableLine struct {
	line  int              // line of the [[name]] header
	keys  map[string]int   // line of each key of the table
	elems map[string][]int // line of each string or bracketed element of a list value; nil if none
}

// tableLine returns the header line of element i of the list of tables name.
func (l *suiteLines) tableLine(name string, i int) int {
	if occ := l.tables[name]; i < len(occ) {
		return occ[i].line
	}
	return l.top[name]
}

// keyLine returns the line of key in element i of the list of tables name.
func (l *suiteLines) keyLine(name string, i int, key string) int {
	if occ := l.tables[name]; i < len(occ) {
		if line, ok := occ[i].keys[key]; ok {
			return line
		}
	}
	return l.tableLine(name, i)
}

// elemLine returns the line of element j of the list value of key in
// element i of the list of tables name, when the scanner found the lines of
// exactly n elements; otherwise the key's line.
func (l *suiteLines) elemLine(name string, i int, key string, j, n int) int {
	if occ := l.tables[name]; i < len(occ) {
		if e := occ[i].elems[key]; len(e) == n && j < n {
			return e[j]
		}
	}
	return l.keyLine(name, i, key)
}

func scanSuiteLines(data []byte) suiteLines {
	l := suiteLines{top: make(map[string]int), tables: make(map[string][]tableLine)}
	var st valueScan
	table, index := "", -1 // current table: "" top level; index -1 when keys are not recorded
	for n, text := range strings.Split(string(data), "\n") {
		line := n + 1
		text = strings.TrimSuffix(text, "\r")
		if st.open() {
			st.line = line
			st.scan(text)
			l.endValue(&st)
			continue
		}
		t := strings.TrimLeft(text, " \t")
		if t == "" || t[0] == '#' {
			continue
		}
		if t[0] == '[' {
			array := strings.HasPrefix(t, "[[")
			t = strings.TrimPrefix(t, "[")
			if array {
				t = t[1:]
			}
			segs, _ := scanKey(t)
			if len(segs) == 0 {
				continue
			}
			if _, ok := l.top[segs[0]]; !ok {
				l.top[segs[0]] = line
			}
			table, index = segs[0], -1
			switch occ := l.tables[segs[0]]; {
			case array && len(segs) == 1:
				l.tables[segs[0]] = append(occ, tableLine{line: line, keys: make(map[string]int)})
				index = len(occ)
			case len(segs) > 1 && len(occ) > 0:
				// [t.sub] or [[t.sub]] below [[t]]: sub is a key of the last t.
				if _, ok := occ[len(occ)-1].keys[segs[1]]; !ok {
					occ[len(occ)-1].keys[segs[1]] = line
				}
			}
			continue
		}
		segs, rest := scanKey(t)
		if len(segs) == 0 {
			continue
		}
		switch {
		case table == "":
			if _, ok := l.top[segs[0]]; !ok {
				l.top[segs[0]] = line
			}
		case index >= 0:
			if keys := l.tables[table][index].keys; keys[segs[0]] == 0 {
				keys[segs[0]] = line
			}
		}
		if rest, ok := strings.CutPrefix(strings.TrimLeft(rest, " \t"), "="); ok {
			st.start(line)
			if index >= 0 {
				st.owner = &l.tables[table][index]
				st.key = segs[0]
			}
			st.scan(rest)
			l.endValue(&st)
		}
	}
	return l
}

// endValue stores the element lines of a list value once it has closed.
func (l *suiteLines) endValue(st *valueScan) {
	if st.open() || st.owner == nil {
		return
	}
	if len(st.elems) > 0 && st.outer == '[' {
		if st.owner.elems == nil {
			st.owner.elems = make(map[string][]int)
		}
		if _, dup := st.owner.elems[st.key]; !dup {
			st.owner.elems[st.key] = st.elems
		}
	}
	st.owner, st.elems = nil, nil
}

// scanKey reads a TOML key (bare, "basic", 'literal', dotted) at the start
// of s and returns its parts and the text after it.
func scanKey(s string) ([]string, string) {
	var segs []string
	for {
		s = strings.TrimLeft(s, " \t")
		if s == "" {
			return segs, s
		}
		var seg string
		switch s[0] {
		case '"':
			end := 1
			for end < len(s) && s[end] != '"' {
				if s[end] == '\\' {
					end++
				}
				end++
			}
			if end >= len(s) {
				return segs, ""
			}
			seg = s[:end+1]
			if u, err := strconv.Unquote(seg); err == nil {
				seg = u
			} else {
				seg = seg[1 : len(seg)-1]
			}
			s = s[end+1:]
		case '\'':
			end := strings.IndexByte(s[1:], '\'')
			if end < 0 {
				return segs, ""
			}
			seg, s = s[1:end+1], s[end+2:]
		default:
			end := strings.IndexAny(s, " \t.=[]#\"'")
			if end < 0 {
				end = len(s)
			}
			if end == 0 {
				return segs, s
			}
			seg, s = s[:end], s[end:]
		}
		segs = append(segs, seg)
		s = strings.TrimLeft(s, " \t")
		if !strings.HasPrefix(s, ".") {
			return segs, s
		}
		s = s[1:]
	}
}

// valueScan follows a TOML value across lines: open brackets and an open
// multi-line string.
type valueScan struct {
	depth int    // open [ and {
	ml    string // `"""` or `'''` inside a multi-line string, else ""

	// Element lines of a table key's list value.
	line  int        // line being scanned
	outer byte       // the value's first bracket, '[' for a list
	elems []int      // line of each string or bracketed element at depth 1
	owner *tableLine // table whose key the value belongs to; nil when not recorded
	key   string
}

// start begins a new value on line.
func (st *valueScan) start(line int) {
	st.line, st.outer, st.elems, st.owner, st.key = line, 0, nil, nil, ""
}

// element records that an element of the outer list starts here.
func (st *valueScan) element() {
	if st.depth == 1 && st.outer == '[' {
		st.elems = append(st.elems, st.line)
	}
}

func (st *valueScan) open() bool { return st.depth > 0 || st.ml != "" }

// scan reads one line (or the rest of one) of a value.
func (st *valueScan) scan(s string) {
	for i := 0; i < len(s); {
		if st.ml != "" {
			c := st.ml[0]
			if c == '"' && s[i] == '\\' {
				i += 2
				continue
			}
			if strings.HasPrefix(s[i:], st.ml) {
				// The delimiter is the last three of up to five quotes.
				for i < len(s) && s[i] == c {
					i++
				}
				st.ml = ""
				continue
			}
			i++
			continue
		}
		switch c := s[i]; c {
		case '#':
			return
		case '[', '{':
			if st.depth == 0 && st.outer == 0 {
				st.outer = c
			}
			st.element()
			st.depth++
		case ']', '}':
			st.depth = max(st.depth-1, 0)
		case '"', '\'':
			st.element()
			if strings.HasPrefix(s[i:], strings.Repeat(string(c), 3)) {
				st.ml = s[i : i+3]
				i += 3
				continue
			}
			i++
			for i < len(s) && s[i] != c {
				if c == '"' && s[i] == '\\' {
					i++
				}
				i++
			}
		}
		i++
	}
}
