package bench

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"flag"
	"fmt"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"
)

// The suite format is TOML; the syntax cases below follow the TOML v1.0.0
// specification (T. Preston-Werner, P. Gedam et al., 2021, https://toml.io/en/v1.0.0),
// cited by section. The error message formats are the project's own
// (DEVELOPERS.md: "an error naming file, line and field").

var updateSuiteGolden = flag.Bool("update-suite", false, "rewrite the suite parser's golden files")

// suiteTestCatalogue is a small catalogue for the parser's tests, with
// parameters of every kind, bounded and unbounded.
func suiteTestCatalogue() *Catalogue {
	return &Catalogue{
		Problems: []ProblemSpec{
			{Name: "ungm", Params: []Param{
				{Name: "steps", Kind: Int, Default: Value{Num: 50}, Min: 1, Max: 10000},
			}},
			{Name: "launch", Params: []Param{
				{Name: "steps", Kind: Int, Default: Value{Num: 100}, Min: 1, Max: 10000},
				{Name: "clutter", Kind: Float, Default: Value{Num: 0.1}, Min: 0, Max: 1},
				{Name: "offset", Kind: Int, Default: Value{Num: 0}}, // unbounded
			}},
		},
		Filters: []FilterSpec{
			{Name: "kf"},
			{Name: "pf", Params: []Param{
				{Name: "particles", Kind: Int, Default: Value{Num: 1000}, Min: 1, Max: 1000000},
				{Name: "resample", Kind: String, Default: Value{Str: "systematic"},
					Choices: []string{"multinomial", "residual", "stratified", "systematic"}},
			}},
			{Name: "ukf", Params: []Param{
				{Name: "alpha", Kind: Float, Default: Value{Num: 1e-3}, Min: 1e-4, Max: 1},
				{Name: "beta", Kind: Float, Default: Value{Num: 2}},
				{Name: "kappa", Kind: Float, Default: Value{Num: 0}},
			}},
		},
	}
}

func readSuiteFile(t testing.TB, name string) []byte {
	t.Helper()
	data, err := os.ReadFile(filepath.Join("testdata", "suites", name))
	if err != nil {
		t.Fatal(err)
	}
	return data
}

// Each bad file starts with "# error: <the exact message>".
func TestParseSuiteErrors(t *testing.T) {
	files, err := filepath.Glob(filepath.Join("testdata", "suites", "bad", "*.toml"))
	if err != nil || len(files) == 0 {
		t.Fatalf("no bad suite files: %v", err)
	}
	cat := suiteTestCatalogue()
	for _, path := range files {
		name := filepath.Base(path)
		t.Run(name, func(t *testing.T) {
			data := readSuiteFile(t, filepath.Join("bad", name))
			first, _, _ := strings.Cut(string(data), "\n")
			want, ok := strings.CutPrefix(first, "# error: ")
			if !ok {
				t.Fatalf("first line %q does not start with # error:", first)
			}
			s, err := ParseSuite(name, data, cat)
			if err == nil {
				t.Fatalf("parsed without error: %s", s.Canonical())
			}
			se, ok := err.(*SuiteError)
			if !ok {
				t.Fatalf("error %T, want *SuiteError: %v", err, err)
			}
			if got := se.Error(); got != want {
				t.Errorf("error\n got %s\nwant %s", got, want)
			}
			if se.File != name {
				t.Errorf("File = %q, want %q", se.File, name)
			}
		})
	}
}

type wantConfig struct {
	name   string
	values Values
	config string // filters only
	line   int
}

func num(f float64) Value { return Value{Num: f} }
func text(s string) Value { return Value{Str: s} }
func gotConfigs(s *Suite) (problems, filters []wantConfig) {
	for _, c := range s.Problems {
		problems = append(problems, wantConfig{c.Spec.Name, c.Values, "", c.Line})
	}
	for _, c := range s.Filters {
		filters = append(filters, wantConfig{c.Spec.Name, c.Values, c.Config, c.Line})
	}
	return problems, filters
}

func TestParseSuiteGood(t *testing.T) {
	cat := suiteTestCatalogue()
	for _, tc := range []struct {
		file              string
		name              string
		seed              uint64
		runs              int
		problems, filters []wantConfig
	}{
		{
			file: "harbour-radar.toml", name: "harbour-radar", seed: 7, runs: 200,
			problems: []wantConfig{
				{"launch", Values{"steps": num(150), "clutter": num(0.1), "offset": num(0)}, "", 6},
				{"ungm", Values{"steps": num(50)}, "", 10},
			},
			// resample is written before particles, so particles varies fastest.
			filters: []wantConfig{
				{"kf", Values{}, "", 13},
				{"pf", Values{"particles": num(250), "resample": text("systematic")}, "particles=250", 16},
				{"pf", Values{"particles": num(1000), "resample": text("systematic")}, "", 16},
				{"pf", Values{"particles": num(250), "resample": text("multinomial")}, "particles=250 resample=multinomial", 16},
				{"pf", Values{"particles": num(1000), "resample": text("multinomial")}, "resample=multinomial", 16},
				{"ukf", Values{"alpha": num(1), "beta": num(2), "kappa": num(-0.5)}, "alpha=1 kappa=-0.5", 21},
			},
		},
		{
			// Defaults of seed and runs (the brief of the format: 1 and 100).
			file: "minimal.toml", name: "drone-survey", seed: 1, runs: 100,
			problems: []wantConfig{{"ungm", Values{"steps": num(50)}, "", 2}},
			filters:  []wantConfig{{"pf", Values{"particles": num(1000), "resample": text("systematic")}, "", 4}},
		},
		{
			// TOML v1.0.0, "Inline Table" and "Array": an array of inline
			// tables may span lines. Keys inside have no line of their own;
			// the list's line stands in.
			file: "inline.toml", name: "inline", seed: 1, runs: 100,
			problems: []wantConfig{
				{"ungm", Values{"steps": num(10)}, "", 3},
				{"ungm", Values{"steps": num(20)}, "", 3},
			},
			filters: []wantConfig{
				{"pf", Values{"particles": num(100), "resample": text("residual")}, "particles=100 resample=residual", 4},
				{"pf", Values{"particles": num(100), "resample": text("stratified")}, "particles=100 resample=stratified", 4},
				{"kf", Values{}, "", 4},
			},
		},
		{
			// Expression models (README, "Models defined in the suite
			// file"): their values are steps, dt and the named parameters,
			// defaulting to the table's values. TOML v1.0.0, "Table": the
			// [problem.params] sub-table belongs to the last [[problem]].
			file: "harbour-launch-expr.toml", name: "harbour-launch-expr", seed: 11, runs: 20,
			problems: []wantConfig{
				{"harbour-launch-ungm", Values{"steps": num(100), "dt": num(1), "a": num(0.5), "b": num(25), "c": num(8)}, "", 8},
				{"launch-channel", Values{"steps": num(60), "dt": num(0.5), "heading": num(0.6), "x0": num(400), "y0": num(-250)}, "", 25},
			},
			filters: []wantConfig{
				{"pf", Values{"particles": num(250), "resample": text("systematic")}, "particles=250", 51},
				{"pf", Values{"particles": num(1000), "resample": text("systematic")}, "", 51},
			},
		},
		{
			// TOML v1.0.0, "String": a newline right after the opening """
			// is trimmed; ''' opens a multi-line literal string. "Keys":
			// 'runs' is a quoted key equal to runs. "Integer": the int64
			// range; -2^53 is the smallest integer a Value holds exactly.
			// "Array": arrays may span lines and hold comments.
			file: "strings.toml", name: "[[filter]]\nuse = \"trap\"\n", seed: 0, runs: 1,
			problems: []wantConfig{
				{"launch", Values{"steps": num(100), "clutter": num(0.25), "offset": num(-9007199254740992)}, "", 7},
			},
			filters: []wantConfig{
				{"pf", Values{"particles": num(3), "resample": text("stratified")}, "particles=3 resample=stratified", 11},
				{"pf", Values{"particles": num(4), "resample": text("stratified")}, "particles=4 resample=stratified", 11},
			},
		},
	} {
		t.Run(tc.file, func(t *testing.T) {
			data := readSuiteFile(t, filepath.Join("good", tc.file))
			orig := bytes.Clone(data)
			s, err := ParseSuite(tc.file, data, cat)
			if err != nil {
				t.Fatal(err)
			}
			if !bytes.Equal(data, orig) {
				t.Error("ParseSuite modified its input")
			}
			if s.File != tc.file || s.Name != tc.name || s.Seed != tc.seed || s.Runs != tc.runs {
				t.Errorf("File, Name, Seed, Runs = %q, %q, %d, %d; want %q, %q, %d, %d",
					s.File, s.Name, s.Seed, s.Runs, tc.file, tc.name, tc.seed, tc.runs)
			}
			problems, filters := gotConfigs(s)
			if !reflect.DeepEqual(problems, tc.problems) {
				t.Errorf("problems\n got %v\nwant %v", problems, tc.problems)
			}
			if !reflect.DeepEqual(filters, tc.filters) {
				t.Errorf("filters\n got %v\nwant %v", filters, tc.filters)
			}
		})
	}
}

// The hashes are the SHA-256 of the .canonical golden files, computed once
// with GNU coreutils sha256sum; they check Hash against an implementation
// outside Go and pin the canonical form: a change to it changes every
// suite's hash, so it must be deliberate.
const (
	harbourRadarHash = "824ef3701c9c8c7594d4bc66c97897a509e543d1fd888e6aa3515fd4a2053851"
	harbourExprHash  = "b4efe01e0b1a16f5b21a2de4336992d97c7f1b7c4787ed8a8bf5e67650319db3"
)

func TestCanonicalGolden(t *testing.T) {
	cat := suiteTestCatalogue()
	for _, tc := range []struct{ name, hash string }{
		{"harbour-radar", harbourRadarHash},
		{"harbour-launch-expr", harbourExprHash}, // expression models
	} {
		s, err := ParseSuite(tc.name+".toml", readSuiteFile(t, "good/"+tc.name+".toml"), cat)
		if err != nil {
			t.Fatal(err)
		}
		golden := filepath.Join("testdata", "suites", tc.name+".canonical")
		got := s.Canonical()
		if *updateSuiteGolden {
			if err := os.WriteFile(golden, got, 0o644); err != nil {
				t.Fatal(err)
			}
		}
		want, err := os.ReadFile(golden)
		if err != nil {
			t.Fatal(err)
		}
		if !bytes.Equal(got, want) {
			if err := os.WriteFile(golden+".got", got, 0o644); err != nil {
				t.Fatal(err)
			}
			t.Errorf("canonical form differs from %s (got written to %s.got; diff them, then rerun with -update-suite if the change is meant)", golden, golden)
		}
		if h := s.Hash(); h != tc.hash {
			t.Errorf("%s: Hash() = %s, want %s", tc.name, h, tc.hash)
		}
		if sum := sha256.Sum256(want); hex.EncodeToString(sum[:]) != tc.hash {
			t.Errorf("sha256 of %s is not the committed hash; recompute it with sha256sum", golden)
		}
	}
}

// The canonical form depends on what runs, not on how the file is written:
// the reordered file has other key order, comments, whitespace, quoting,
// float spellings, an explicit default and the sweep split over tables.
func TestCanonicalIndependentOfLayout(t *testing.T) {
	cat := suiteTestCatalogue()
	a, err := ParseSuite("a.toml", readSuiteFile(t, "good/harbour-radar.toml"), cat)
	if err != nil {
		t.Fatal(err)
	}
	b, err := ParseSuite("b.toml", readSuiteFile(t, "good/harbour-radar-reordered.toml"), cat)
	if err != nil {
		t.Fatal(err)
	}
	if ca, cb := a.Canonical(), b.Canonical(); !bytes.Equal(ca, cb) {
		t.Errorf("canonical forms differ:\n%s\n---\n%s", ca, cb)
	}
	if a.Hash() != b.Hash() {
		t.Error("hashes differ")
	}
	// Windows line ends change nothing either, not even the lines.
	crlf := bytes.ReplaceAll(readSuiteFile(t, "good/harbour-radar.toml"), []byte("\n"), []byte("\r\n"))
	c, err := ParseSuite("c.toml", crlf, cat)
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(a.Canonical(), c.Canonical()) {
		t.Error("CRLF file has another canonical form")
	}
	pa, fa := gotConfigs(a)
	pc, fc := gotConfigs(c)
	if !reflect.DeepEqual(pa, pc) || !reflect.DeepEqual(fa, fc) {
		t.Errorf("CRLF file gives other configurations:\n%v %v\n%v %v", pa, fa, pc, fc)
	}
	// A change that matters changes the hash: one more run.
	d, err := ParseSuite("d.toml", bytes.Replace(readSuiteFile(t, "good/harbour-radar.toml"), []byte("runs = 200"), []byte("runs = 201"), 1), cat)
	if err != nil {
		t.Fatal(err)
	}
	if d.Hash() == a.Hash() {
		t.Error("runs = 201 has the hash of runs = 200")
	}
}

// The canonical form is itself a suite file that parses to the same suite.
func TestCanonicalReparses(t *testing.T) {
	files, _ := filepath.Glob(filepath.Join("testdata", "suites", "good", "*.toml"))
	if len(files) == 0 {
		t.Fatal("no good suite files")
	}
	cat := suiteTestCatalogue()
	for _, path := range files {
		s, err := ParseSuite(path, readSuiteFile(t, filepath.Join("good", filepath.Base(path))), cat)
		if err != nil {
			t.Fatal(err)
		}
		c := s.Canonical()
		s2, err := ParseSuite("canonical", c, cat)
		if err != nil {
			t.Fatalf("%s: canonical form does not parse: %v\n%s", path, err, c)
		}
		if c2 := s2.Canonical(); !bytes.Equal(c, c2) {
			t.Errorf("%s: canonical form changes on reparsing:\n%s\n---\n%s", path, c, c2)
		}
	}
}

// TOML v1.0.0, "Float": floats are IEEE 754 binary64 and the special values
// nan and inf exist; the canonical form must tell apart floats that differ
// in the last bit and must write integral floats so they read back as floats.
func TestFormatTOMLFloat(t *testing.T) {
	for _, tc := range []struct {
		f    float64
		want string
	}{
		{1, "1.0"},
		{-0.5, "-0.5"},
		{0.1, "0.1"},
		{0.30000000000000004, "0.30000000000000004"}, // 0.1 + 0.2 in binary64
		{1e21, "1e+21"},
		{5e-324, "5e-324"}, // the smallest subnormal binary64
		{1.7976931348623157e308, "1.7976931348623157e+308"},
	} {
		if got := formatTOMLFloat(tc.f); got != tc.want {
			t.Errorf("formatTOMLFloat(%v) = %q, want %q", tc.f, got, tc.want)
		}
	}
}

// TOML v1.0.0, "String": basic strings escape " and \ and write control
// characters as \uXXXX; the decoder must read quoteTOML's output back.
func TestQuoteTOML(t *testing.T) {
	for _, s := range []string{"plain", `a "quoted" \ path`, "tab\tnew\nline\x7f\x01", "Grüße ☂"} {
		q := quoteTOML(s)
		data := fmt.Sprintf("name = %s\n[[problem]]\nuse = \"ungm\"\n[[filter]]\nuse = \"kf\"\n", q)
		got, err := ParseSuite("q.toml", []byte(data), suiteTestCatalogue())
		if err != nil {
			t.Errorf("quoteTOML(%q) = %s does not parse: %v", s, q, err)
			continue
		}
		if got.Name != s {
			t.Errorf("quoteTOML(%q) = %s reads back as %q", s, q, got.Name)
		}
	}
}

// The line scanner against hand-counted lines of TOML v1.0.0 constructs:
// "Comment", "Keys" (bare, quoted, dotted), "String" (multi-line basic and
// literal, with quotes inside), "Array" (over lines), "Array of Tables".
func TestScanSuiteLines(t *testing.T) {
	src := strings.Join([]string{
		`# comment [[filter]]`, // 1
		`name = """`,           // 2
		`[[filter]]`,           // 3: inside the string
		`x = "\"""" `,          // 4: closes with a quote inside (four quotes)
		`"se.ed" = 1`,          // 5
		`'runs' = 2 # c`,       // 6
		`[[ problem ]]`,        // 7
		`use = "a#b"`,          // 8
		`steps = [ # [`,        // 9
		`  "]", '[',`,          // 10
		`  ''' ] `,             // 11
		`  ]'''`,               // 12
		`]`,                    // 13
		`dot.ted = 3`,          // 14
		`[problem.sub]`,        // 15
		`k = 1`,                // 16
		`[[filter]]`,           // 17
		`  use="pf"`,           // 18
		`[["problem"]]`,        // 19
		`use = 'b'`,            // 20
		`inl = { a = [1,`,      // 21
		`  2] }`,               // 22
		`after = 1`,            // 23
	}, "\n")
	l := scanSuiteLines([]byte(src))
	wantTop := map[string]int{"name": 2, "se.ed": 5, "runs": 6, "problem": 7, "filter": 17}
	if !reflect.DeepEqual(l.top, wantTop) {
		t.Errorf("top = %v, want %v", l.top, wantTop)
	}
	wantTables := map[string][]tableLine{
		"problem": {
			// The strings "]", '[' and ''' ]\n ]''' are elements of steps.
			{line: 7, keys: map[string]int{"use": 8, "steps": 9, "dot": 14, "sub": 15}, elems: map[string][]int{"steps": {10, 10, 11}}},
			{line: 19, keys: map[string]int{"use": 20, "inl": 21, "after": 23}},
		},
		"filter": {{line: 17, keys: map[string]int{"use": 18}}},
	}
	if !reflect.DeepEqual(l.tables, wantTables) {
		t.Errorf("tables = %v, want %v", l.tables, wantTables)
	}
}

// A sweep that would expand past maxSweep is refused at the key that
// crosses the limit: 200 × 51 = 10200 > 10000.
func TestSweepLimit(t *testing.T) {
	var steps, clutter []string
	for i := 1; i <= 200; i++ {
		steps = append(steps, fmt.Sprint(i))
	}
	for i := 0; i <= 50; i++ {
		clutter = append(clutter, fmt.Sprintf("%.2f", float64(i)/50))
	}
	data := fmt.Sprintf("name = \"big\"\n[[problem]]\nuse = \"launch\"\nsteps = [%s]\nclutter = [%s]\n[[filter]]\nuse = \"kf\"\n",
		strings.Join(steps, ","), strings.Join(clutter, ","))
	_, err := ParseSuite("big.toml", []byte(data), suiteTestCatalogue())
	want := `big.toml:5: problem "launch": the sweep gives more than 10000 configurations; split it into several tables or suites`
	if err == nil || err.Error() != want {
		t.Errorf("error %v, want %s", err, want)
	}
	// One clutter value fewer, 200 × 50 = 10000, is allowed.
	data = strings.Replace(data, ",1.00]", "]", 1)
	s, err := ParseSuite("big.toml", []byte(data), suiteTestCatalogue())
	if err != nil {
		t.Fatal(err)
	}
	if len(s.Problems) != 10000 {
		t.Errorf("%d problems, want 10000", len(s.Problems))
	}
}

func TestSuiteErrorFormat(t *testing.T) {
	for _, tc := range []struct {
		e    SuiteError
		want string
	}{
		{SuiteError{"s.toml", 14, `filter "pf"`, "m"}, `s.toml:14: filter "pf": m`},
		{SuiteError{"s.toml", 0, "name", "m"}, `s.toml: name: m`},
		{SuiteError{"s.toml", 3, "", "m"}, `s.toml:3: m`},
		{SuiteError{"", 3, "runs", "m"}, `built-in suite:3: runs: m`},
	} {
		if got := tc.e.Error(); got != tc.want {
			t.Errorf("%#v.Error() = %q, want %q", tc.e, got, tc.want)
		}
	}
}

// Levenshtein (1966, "Binary codes capable of correcting deletions,
// insertions, and reversals") counts insertions, deletions, substitutions;
// Damerau (1964, "A technique for computer detection and correction of
// spelling errors") adds the transposition of adjacent letters. The
// kitten/sitting example is the textbook one (distance 3, from memory); ca
// to abc is the textbook case (from memory) where the restricted distance,
// which edits no substring twice, is 3 while the unrestricted one is 2.
func TestEditDistance(t *testing.T) {
	for _, tc := range []struct {
		a, b string
		want int
	}{
		{"kitten", "sitting", 3},
		{"", "abc", 3},
		{"abc", "", 3},
		{"same", "same", 0},
		{"particels", "particles", 1}, // one transposition
		{"ca", "abc", 3},
		{"ungn", "ungm", 1},
		{"flaw", "lawn", 2},
	} {
		if got := editDistance([]rune(tc.a), []rune(tc.b)); got != tc.want {
			t.Errorf("editDistance(%q, %q) = %d, want %d", tc.a, tc.b, got, tc.want)
		}
		if got := editDistance([]rune(tc.b), []rune(tc.a)); got != tc.want {
			t.Errorf("editDistance(%q, %q) = %d, want %d (symmetry)", tc.b, tc.a, got, tc.want)
		}
	}
}

// The thresholds of Suggest (distance 2, or 1 for short names; a shared
// prefix of 3) are common practice for "did you mean" hints, no source.
func TestSuggest(t *testing.T) {
	keys := []string{"use", "particles", "resample"}
	for _, tc := range []struct {
		name  string
		valid []string
		want  string
	}{
		{"particels", keys, "particles"},
		{"Particles", keys, "particles"},
		{"part", keys, "particles"},            // shared prefix
		{"resampling", keys, "resample"},       // shared prefix, distance 3
		{"uses", keys, "use"},                  // one insertion
		{"zzz", keys, ""},                      // nothing near
		{"x", []string{"pf", "kf"}, ""},        // short names: distance 2 is too far
		{"ef", []string{"ekf", "pf"}, "ekf"},   // both at distance 1: the earlier wins
		{"ukf", []string{"ekf", "ukf"}, "ukf"}, // exact
		{"rusn", suiteTopKeys, "runs"},
		{"filters", suiteTopKeys, "filter"},
		{"anything", nil, ""},
	} {
		if got := Suggest(tc.name, tc.valid); got != tc.want {
			t.Errorf("Suggest(%q, %v) = %q, want %q", tc.name, tc.valid, got, tc.want)
		}
	}
}

// Parsing is deterministic: Go's map order is random, so parse a file with
// many keys and tables repeatedly and expect the same error each time.
func TestParseSuiteDeterministicErrors(t *testing.T) {
	data := []byte("name = \"d\"\n[[problem]]\nuse = \"launch\"\nzz = 1\nyy = 2\nsteps = 0\n[[filter]]\nuse = \"kf\"\n")
	want := `d.toml:4: problem "launch": unknown key "zz" (valid keys: use, steps, clutter, offset)`
	for range 20 {
		_, err := ParseSuite("d.toml", data, suiteTestCatalogue())
		if err == nil || err.Error() != want {
			t.Fatalf("error %v, want %s", err, want)
		}
	}
}

func ExampleParseSuite() {
	cat := &Catalogue{
		Problems: []ProblemSpec{{Name: "launch", Params: []Param{
			{Name: "steps", Kind: Int, Default: Value{Num: 100}, Min: 1, Max: 10000},
		}}},
		Filters: []FilterSpec{{Name: "pf", Params: []Param{
			{Name: "particles", Kind: Int, Default: Value{Num: 1000}, Min: 1, Max: 1000000},
		}}},
	}
	src := `
name = "harbour-radar"
[[problem]]
use = "launch"
[[filter]]
use = "pf"
particles = [250, 1000, 4000]
[[filter]]
use = "pf"
particels = 8000
`
	_, err := ParseSuite("harbour.toml", []byte(src), cat)
	fmt.Println(err)

	s, _ := ParseSuite("harbour.toml", []byte(strings.Replace(src, "particels", "particles", 1)), cat)
	for _, f := range s.Filters {
		fmt.Printf("line %d: %s %q\n", f.Line, f.Spec.Name, f.Config)
	}
	var se *SuiteError
	fmt.Println(errors.As(err, &se), se.Line, se.Key)
	// Output:
	// harbour.toml:10: filter "pf": unknown key "particels" (did you mean "particles"?)
	// line 5: pf "particles=250"
	// line 5: pf ""
	// line 5: pf "particles=4000"
	// line 8: pf "particles=8000"
	// true 10 filter "pf"
}

func ExampleSuggest() {
	fmt.Println(Suggest("partcles", []string{"use", "particles", "resample"}))
	fmt.Printf("%q\n", Suggest("zzz", []string{"use", "particles", "resample"}))
	// Output:
	// particles
	// ""
}
