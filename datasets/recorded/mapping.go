package recorded

import (
	"bytes"
	"errors"
	"fmt"
	"path"
	"regexp"
	"slices"
	"sort"
	"strconv"
	"strings"
	"time"

	"github.com/BurntSushi/toml"
)

// Mapping says how delimited text files make one recording: for each file
// its time column and the quantities of its other columns. It is read from
// TOML by ParseMapping:
//
//	dataset   = "BROAD"                 # required
//	sequence  = "trial-21"              # default: the name of the folder or file read
//	licence   = "CC BY 4.0"
//	source    = "where the data came from"
//	start     = "2021-06-01T10:00:00Z"  # absolute time of time zero, if known
//	time_base = "relative"              # or "unix": time columns are Unix times
//
//	[[file]]
//	path       = "imu.csv"              # relative to the folder read
//	sensor     = "imu"                  # default: the file name without extension
//	delimiter  = ","                    # one character; "\t" for TSV
//	skip_lines = 0                      # lines before the header
//	time       = "t_s"                  # time column
//	time_unit  = "s"                    # s, ms, us or ns
//
//	[[file.quantity]]
//	kind    = "gyro"                    # see below
//	columns = ["gx", "gy", "gz"]        # 1 to 3 components (x, y, z); 4 for orientation
//	unit    = "rad/s"                   # the source's unit, converted to the canonical one
//	frame   = "sensor"
//	role    = "measured"                # or "true" (ground truth)
//	name    = "gyro"                    # column prefix; default from kind and role
//	order   = "wxyz"                    # orientation only: wxyz or xyzw
//
// Kinds and their units (canonical first): gyro and gyro-bias (rad/s,
// deg/s), accelerometer and accel-bias (m/s^2, g), magnetometer (uT, nT,
// mT, T, G, mG), position (m, cm, mm, km), velocity (m/s, km/h, kn),
// orientation (unitless; stored w, x, y, z), flag (unitless, one column: a
// 0/1 mark per sample, such as a dataset's mark of the samples meant for
// evaluation; named by its prefix alone, default "flag"). Columns are named
// prefix_x, prefix_y, prefix_z (quaternions prefix_w first); the default
// prefix is gyro, accel, mag, pos, vel, quat, gyro_bias or accel_bias, with
// "true_" before it for ground truth.
//
// Header fields are matched by name after trimming spaces and a leading
// '#'; a name also matches a field that adds a bracketed unit
// ("w_RS_S_x" matches "w_RS_S_x [rad s^-1]"). Quoted fields may not
// contain the delimiter. After the header, empty lines and lines starting
// with '#' are skipped.
type Mapping struct {
	file     string // the mapping file, for errors
	meta     Meta   // Dataset, Sequence, Licence, Source, Start
	unixTime bool
	files    []fileMapping
}

type fileMapping struct {
	path, sensor string
	delim        byte
	skipLines    int
	time         string
	perUnit      int64 // nanoseconds per time unit
	outs         []outColumn
}

// outColumn is one column of the recording and where it comes from.
type outColumn struct {
	src   string  // source column name
	scale float64 // to the canonical unit
	col   Column  // name, unit, frame, role
}

// Dataset returns the dataset name of the mapping.
func (m *Mapping) Dataset() string { return m.meta.Dataset }

var nameRE = regexp.MustCompile(`^[A-Za-z][A-Za-z0-9_.-]*$`)

// ParseMapping reads a mapping from TOML; file names it in errors. Every
// mistake is reported, in line order, as a *LoadError in an ErrorList:
// unknown keys, wrong types, missing or invalid values.
func ParseMapping(file string, data []byte) (*Mapping, error) {
	var raw map[string]any
	if _, err := toml.Decode(string(data), &raw); err != nil {
		var pe toml.ParseError
		if errors.As(err, &pe) {
			line := pe.Position.Line
			if line < 1 {
				// The decoder gives no line for some mistakes at the end of the input.
				line = bytes.Count(data, []byte{'\n'}) + 1
			}
			return nil, ErrorList{{File: file, Line: line, Msg: "TOML syntax: " + pe.Message}}
		}
		return nil, ErrorList{{File: file, Msg: err.Error()}}
	}
	p := &mappingParser{file: file, lines: scanTOMLLines(data)}
	m := p.parse(raw)
	if len(p.errs) > 0 {
		sort.SliceStable(p.errs, func(i, j int) bool { return p.errs[i].Line < p.errs[j].Line })
		return nil, p.errs
	}
	return m, nil
}

type mappingParser struct {
	file  string
	lines tomlLines
	errs  ErrorList
}

func (p *mappingParser) errorf(path, key, format string, args ...any) {
	field := key
	if field == "" {
		field = path
	}
	p.errs = append(p.errs, &LoadError{File: p.file, Line: p.lines.line(path, key), Field: field, Msg: fmt.Sprintf(format, args...)})
}

// table is one TOML table being read: its values, its path for line
// lookups ("file.0.quantity.1") and the keys it may have.
type table struct {
	p    *mappingParser
	path string
	vals map[string]any
}

func (t table) unknown(allowed ...string) {
	keys := make([]string, 0, len(t.vals))
	for k := range t.vals {
		keys = append(keys, k)
	}
	slices.Sort(keys)
	for _, k := range keys {
		if !slices.Contains(allowed, k) {
			t.p.errorf(t.path, k, "unknown key%s", suggest(k, allowed))
		}
	}
}

func (t table) str(key string) string {
	v, ok := t.vals[key]
	if !ok {
		return ""
	}
	s, ok := v.(string)
	if !ok {
		t.p.errorf(t.path, key, "expected a string, got %s", tomlType(v))
	}
	return s
}

func (t table) integer(key string) int {
	v, ok := t.vals[key]
	if !ok {
		return 0
	}
	n, ok := v.(int64)
	if !ok {
		t.p.errorf(t.path, key, "expected a non-negative integer, got %s", tomlType(v))
		return 0
	}
	if n < 0 || n > 1<<30 {
		t.p.errorf(t.path, key, "expected a non-negative integer, got %d", n)
		return 0
	}
	return int(n)
}

func (t table) strings(key string) []string {
	v, ok := t.vals[key]
	if !ok {
		return nil
	}
	list, ok := v.([]any)
	if !ok {
		t.p.errorf(t.path, key, "expected a list of strings, got %s", tomlType(v))
		return nil
	}
	out := make([]string, len(list))
	for i, e := range list {
		if out[i], ok = e.(string); !ok {
			t.p.errorf(t.path, key, "expected a list of strings, element %d is %s", i+1, tomlType(e))
			return nil
		}
	}
	return out
}

func (t table) tables(key string) []table {
	v, ok := t.vals[key]
	if !ok {
		return nil
	}
	list, ok := v.([]map[string]any)
	if !ok {
		t.p.errorf(t.path, key, "expected [[%s]] tables, got %s", key, tomlType(v))
		return nil
	}
	out := make([]table, len(list))
	for i, e := range list {
		out[i] = table{p: t.p, path: joinPath(t.path, key) + "." + strconv.Itoa(i), vals: e}
	}
	return out
}

func (p *mappingParser) parse(raw map[string]any) *Mapping {
	top := table{p: p, vals: raw}
	top.unknown("dataset", "sequence", "licence", "source", "start", "time_base", "file")
	m := &Mapping{file: p.file}
	m.meta.Dataset = top.str("dataset")
	m.meta.Sequence = top.str("sequence")
	m.meta.Licence = top.str("licence")
	m.meta.Source = top.str("source")
	if m.meta.Dataset == "" {
		p.errorf("", "dataset", "missing or empty (the name of the dataset)")
	}
	switch tb := top.str("time_base"); tb {
	case "", "relative":
	case "unix":
		m.unixTime = true
	default:
		p.errorf("", "time_base", "%q: want relative or unix", tb)
	}
	if s := top.str("start"); s != "" {
		st, err := time.Parse(time.RFC3339Nano, s)
		switch {
		case err != nil:
			p.errorf("", "start", "%q is not an RFC 3339 time (2021-06-01T10:00:00Z)", s)
		case m.unixTime:
			p.errorf("", "start", "not allowed with time_base = \"unix\" (the start is the first sample's time)")
		default:
			m.meta.Start = st.UTC()
		}
	}
	files := top.tables("file")
	if _, ok := raw["file"]; !ok {
		p.errorf("", "file", "missing: at least one [[file]] table")
	}
	names := make(map[string]string) // output column -> table path that made it
	for _, ft := range files {
		m.files = append(m.files, p.parseFile(ft, names))
	}
	return m
}

func (p *mappingParser) parseFile(t table, names map[string]string) fileMapping {
	t.unknown("path", "sensor", "delimiter", "skip_lines", "time", "time_unit", "quantity")
	f := fileMapping{path: t.str("path"), sensor: t.str("sensor"), skipLines: t.integer("skip_lines"), time: t.str("time"), delim: ','}
	if f.path == "" {
		p.errorf(t.path, "path", "missing or empty (the file, relative to the folder read)")
	}
	if f.sensor == "" && f.path != "" {
		base := path.Base(strings.ReplaceAll(f.path, `\`, "/"))
		f.sensor = strings.TrimSuffix(base, path.Ext(base))
	}
	if d, ok := t.vals["delimiter"]; ok {
		s := t.str("delimiter")
		if _, isStr := d.(string); isStr && (len(s) != 1 || strings.ContainsAny(s, "\"\r\n#")) {
			p.errorf(t.path, "delimiter", "%q: want one character other than a quote, a line break or '#'", s)
		} else if len(s) == 1 {
			f.delim = s[0]
		}
	}
	if f.time == "" {
		p.errorf(t.path, "time", "missing or empty (the name of the time column)")
	}
	unit := t.str("time_unit")
	if f.perUnit = timeUnits[unit]; f.perUnit == 0 {
		p.errorf(t.path, "time_unit", "%q: want s, ms, us or ns", unit)
	}
	qs := t.tables("quantity")
	if len(qs) == 0 {
		p.errorf(t.path, "quantity", "missing: at least one [[file.quantity]] table")
	}
	for _, q := range qs {
		f.outs = append(f.outs, p.parseQuantity(q, names)...)
	}
	return f
}

func (p *mappingParser) parseQuantity(t table, names map[string]string) []outColumn {
	t.unknown("kind", "columns", "unit", "frame", "role", "name", "order")
	kname, cols, unit, frame := t.str("kind"), t.strings("columns"), t.str("unit"), t.str("frame")
	k, ok := kinds[kname]
	if !ok {
		p.errorf(t.path, "kind", "%q: want one of %s%s", kname, strings.Join(kindNames, ", "), suggest(kname, kindNames))
		return nil
	}
	var role Role
	switch r := t.str("role"); r {
	case "", "measured":
	case "true":
		role = True
	default:
		p.errorf(t.path, "role", "%q: want measured or true", r)
	}
	scale, ok := k.units[unit]
	if !ok {
		p.errorf(t.path, "unit", "%q is not a unit of %s: want one of %s", unit, kname, unitList(k.units))
	}
	if frame == "" {
		p.errorf(t.path, "frame", "missing or empty (the frame the %s is expressed in)", kname)
	}
	prefix := t.str("name")
	if prefix == "" {
		prefix = k.prefix
		if role == True {
			prefix = "true_" + prefix
		}
	} else if !nameRE.MatchString(prefix) {
		p.errorf(t.path, "name", "%q: want a letter followed by letters, digits, '_', '.' or '-'", prefix)
	}
	var axes []string
	switch {
	case k.quat:
		if len(cols) != 4 {
			p.errorf(t.path, "columns", "orientation needs 4 columns, got %d", len(cols))
			return nil
		}
		switch o := t.str("order"); o {
		case "wxyz":
			axes = []string{"w", "x", "y", "z"}
		case "xyzw":
			axes = []string{"x", "y", "z", "w"}
		default:
			p.errorf(t.path, "order", "%q: want wxyz or xyzw (the order of the columns)", o)
			return nil
		}
	case k.scalar:
		if _, ok := t.vals["order"]; ok {
			p.errorf(t.path, "order", "only for orientation")
		}
		if len(cols) != 1 {
			p.errorf(t.path, "columns", "%s needs 1 column, got %d", kname, len(cols))
			return nil
		}
		axes = []string{""}
	default:
		if _, ok := t.vals["order"]; ok {
			p.errorf(t.path, "order", "only for orientation")
		}
		if len(cols) < 1 || len(cols) > 3 {
			p.errorf(t.path, "columns", "%s needs 1 to 3 columns (x, y, z), got %d", kname, len(cols))
			return nil
		}
		axes = []string{"x", "y", "z"}[:len(cols)]
	}
	out := make([]outColumn, len(cols))
	for i, c := range cols {
		if c == "" {
			p.errorf(t.path, "columns", "column %d has an empty name", i+1)
		}
		name := prefix + "_" + axes[i]
		if k.scalar {
			name = prefix
		}
		if prev, dup := names[name]; dup {
			p.errorf(t.path, "columns", "column %q is also made at line %d", name, p.lines.line(prev, ""))
		}
		names[name] = t.path
		out[i] = outColumn{src: c, scale: scale, col: Column{Name: name, Unit: k.canon, Frame: frame, Role: role}}
	}
	if k.quat && axes[0] == "x" {
		// stored scalar first
		out = append(out[3:], out[:3]...)
	}
	return out
}

func unitList(units map[string]float64) string {
	var u []string
	for k := range units {
		if k != "" {
			u = append(u, k)
		}
	}
	slices.Sort(u)
	return strings.Join(u, ", ")
}

func joinPath(a, b string) string {
	if a == "" {
		return b
	}
	return a + "." + b
}

func tomlType(v any) string {
	switch v.(type) {
	case string:
		return "a string"
	case int64:
		return "an integer"
	case float64:
		return "a float"
	case bool:
		return "a boolean"
	case time.Time:
		return "a date-time"
	case []any:
		return "a list"
	case map[string]any:
		return "a table"
	case []map[string]any:
		return "a list of tables"
	}
	return fmt.Sprintf("%T", v)
}

// suggest returns ` (did you mean "x"?)` for the valid name closest to s,
// or "" when none is close.
func suggest(s string, valid []string) string {
	best, bestD := "", -1
	for _, v := range valid {
		if d := editDistance(s, v); bestD < 0 || d < bestD {
			best, bestD = v, d
		}
	}
	if bestD < 0 || bestD > max(1, len(best)/3) {
		return ""
	}
	return " (did you mean " + strconv.Quote(best) + "?)"
}

func editDistance(a, b string) int {
	prev := make([]int, len(b)+1)
	cur := make([]int, len(b)+1)
	for j := range prev {
		prev[j] = j
	}
	for i := 1; i <= len(a); i++ {
		cur[0] = i
		for j := 1; j <= len(b); j++ {
			c := prev[j-1]
			if a[i-1] != b[j-1] {
				c++
			}
			cur[j] = min(c, prev[j]+1, cur[j-1]+1)
		}
		prev, cur = cur, prev
	}
	return prev[len(b)]
}

// tomlLines holds the line of each table header and key of a TOML file
// the decoder accepted. Paths number each element of an array of tables:
// "file.0.quantity.1.unit". The decoder gives no positions for valid
// keys, hence this small scanner: it follows [table] and [[array]]
// headers and key = value lines, and skips comments, strings and values
// that run over several lines. A dotted key is recorded under each of its prefixes; keys of
// inline tables have no line of their own (lookups fall back to the
// enclosing key or table).
type tomlLines map[string]int

// line returns the line of key in the table at path, falling back to the
// table's header line, or 0.
func (l tomlLines) line(path, key string) int {
	if key != "" || path == "" {
		if n, ok := l[joinPath(path, key)]; ok {
			return n
		}
	}
	for p := path; p != ""; {
		if n, ok := l[p]; ok {
			return n
		}
		i := strings.LastIndexByte(p, '.')
		if i < 0 {
			break
		}
		p = p[:i]
	}
	return 0
}

func scanTOMLLines(data []byte) tomlLines {
	l := tomlLines{}
	count := map[string]int{} // elements so far of each array of tables, by indexed parent path
	cur := ""                 // indexed path of the current table
	depth, multi := 0, ""     // open brackets of a multi-line value; open multi-line string delimiter
	for n, text := range strings.Split(string(data), "\n") {
		line := n + 1
		if multi != "" || depth > 0 {
			depth, multi = scanValue(text, depth, multi)
			continue
		}
		t := strings.TrimSpace(text)
		if t == "" || t[0] == '#' {
			continue
		}
		if t[0] == '[' {
			array := strings.HasPrefix(t, "[[")
			name := strings.TrimPrefix(t[1:], "[")
			end := keyEnd(name, ']')
			if end < 0 {
				continue
			}
			segs := splitKey(name[:end])
			// Resolve the parents against the arrays seen so far.
			p := ""
			for i, s := range segs {
				p = joinPath(p, s)
				if _, ok := l[p]; !ok {
					l[p] = line // a table first named here, perhaps implicitly
				}
				if i < len(segs)-1 || !array {
					if c, ok := count[p]; ok {
						p += "." + strconv.Itoa(c-1)
					}
				}
			}
			if array {
				c := count[p]
				count[p] = c + 1
				p += "." + strconv.Itoa(c)
			}
			cur = p
			if _, ok := l[cur]; !ok {
				l[cur] = line
			}
			continue
		}
		eq := keyEnd(t, '=')
		if eq < 0 {
			continue
		}
		// Record a dotted key a.b under a and a.b.
		k := cur
		for _, seg := range splitKey(t[:eq]) {
			k = joinPath(k, seg)
			if _, ok := l[k]; !ok {
				l[k] = line
			}
		}
		depth, multi = scanValue(t[eq+1:], 0, "")
	}
	return l
}

// keyEnd returns the index of the first end outside quotes (the '=' of a
// key/value line, the ']' of a table header), or -1.
func keyEnd(t string, end byte) int {
	var q byte
	for i := 0; i < len(t); i++ {
		c := t[i]
		switch {
		case q != 0:
			if c == q {
				q = 0
			}
		case c == '"' || c == '\'':
			q = c
		case c == end:
			return i
		}
	}
	return -1
}

// splitKey splits a dotted TOML key into its parts, unquoting quoted
// parts ("a.b" is one part).
func splitKey(k string) []string {
	var segs []string
	for {
		k = strings.TrimLeft(k, " \t")
		var seg string
		switch {
		case strings.HasPrefix(k, `"`):
			j := 1
			for j < len(k) && k[j] != '"' {
				if k[j] == '\\' {
					j++
				}
				j++
			}
			if j >= len(k) { // unterminated: the decoder would have refused it
				seg, k = k[1:], ""
				break
			}
			if u, err := strconv.Unquote(k[:j+1]); err == nil {
				seg = u
			} else {
				seg = k[1:j]
			}
			k = k[j+1:]
		case strings.HasPrefix(k, "'"):
			j := strings.IndexByte(k[1:], '\'')
			if j < 0 {
				seg, k = k[1:], ""
				break
			}
			seg, k = k[1:j+1], k[j+2:]
		default:
			j := strings.IndexByte(k, '.')
			if j < 0 {
				j = len(k)
			}
			seg, k = strings.TrimRight(k[:j], " \t"), k[j:]
		}
		segs = append(segs, seg)
		k = strings.TrimLeft(k, " \t")
		if !strings.HasPrefix(k, ".") {
			return segs
		}
		k = k[1:]
	}
}

// scanValue follows brackets and strings of a value over one line and
// returns the open bracket depth and open multi-line string delimiter.
func scanValue(s string, depth int, multi string) (int, string) {
	for i := 0; i < len(s); i++ {
		if multi != "" {
			if strings.HasPrefix(s[i:], multi) {
				i += len(multi) - 1
				multi = ""
			}
			continue
		}
		switch c := s[i]; c {
		case '#':
			return depth, ""
		case '[', '{':
			depth++
		case ']', '}':
			depth = max(depth-1, 0)
		case '"', '\'':
			if strings.HasPrefix(s[i:], `"""`) || strings.HasPrefix(s[i:], "'''") {
				multi = s[i : i+3]
				i += 2
				continue
			}
			j := i + 1
			for j < len(s) && s[j] != c {
				if c == '"' && s[j] == '\\' {
					j++
				}
				j++
			}
			i = j
		}
	}
	return depth, multi
}
