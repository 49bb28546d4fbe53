package bench

import (
	"bytes"
	"os"
	"path/filepath"
	"testing"
)

// FuzzParseSuite feeds the parser arbitrary bytes, seeded with the good and
// bad suite files (expression models among them) and the expression suites
// of exprmodel_test.go. It must never panic; every error is a *SuiteError
// with a line ≥ 0, the same on a second parse (no dependence on map order);
// every suite it accepts is complete and its canonical form parses to
// itself; every expression model it accepts builds, and its functions run
// at the prior mean without panicking.
func FuzzParseSuite(f *testing.F) {
	for _, dir := range []string{"good", "bad"} {
		files, err := filepath.Glob(filepath.Join("testdata", "suites", dir, "*.toml"))
		if err != nil || len(files) == 0 {
			f.Fatalf("no seed files in testdata/suites/%s: %v", dir, err)
		}
		for _, path := range files {
			data, err := os.ReadFile(path)
			if err != nil {
				f.Fatal(err)
			}
			f.Add(data)
		}
	}
	f.Add([]byte(exprUNGMSuite))
	f.Add([]byte(exprCV2DSuite))
	cat := suiteTestCatalogue()
	f.Fuzz(func(t *testing.T, data []byte) {
		s, err := ParseSuite("fuzz.toml", data, cat)
		_, err2 := ParseSuite("fuzz.toml", data, cat)
		if err != nil {
			se, ok := err.(*SuiteError)
			if !ok {
				t.Fatalf("error %T, want *SuiteError: %v", err, err)
			}
			if se.Line < 0 || se.File != "fuzz.toml" || se.Msg == "" {
				t.Fatalf("malformed error %#v", se)
			}
			if err2 == nil || err2.Error() != err.Error() {
				t.Fatalf("second parse gave %v, first %v", err2, err)
			}
			return
		}
		if err2 != nil {
			t.Fatalf("second parse failed: %v", err2)
		}
		if s.Name == "" || s.Runs < 1 || len(s.Problems) == 0 || len(s.Filters) == 0 {
			t.Fatalf("incomplete suite: %+v", s)
		}
		for _, c := range s.Problems {
			if len(c.Values) != len(c.Spec.Params) {
				t.Fatalf("problem %s has values %v", c.Spec.Name, c.Values)
			}
			if c.expr == nil {
				continue
			}
			p, err := c.Spec.Build(c.Values)
			if err != nil {
				t.Fatalf("expression model %s does not build: %v", c.Spec.Name, err)
			}
			x, z := make([]float64, p.Model.Nx), make([]float64, p.Model.Nz)
			p.Model.F(x, p.X0, 1)
			p.Model.H(z, x, 1)
		}
		for _, c := range s.Filters {
			if len(c.Values) != len(c.Spec.Params) || c.Config != ConfigString(c.Spec.Params, c.Values) {
				t.Fatalf("filter %s has values %v, config %q", c.Spec.Name, c.Values, c.Config)
			}
		}
		canon := s.Canonical()
		s2, err := ParseSuite("canonical.toml", canon, cat)
		if err != nil {
			t.Fatalf("canonical form does not parse: %v\n%s", err, canon)
		}
		if !bytes.Equal(s2.Canonical(), canon) {
			t.Fatalf("canonical form changes on reparsing:\n%s\n---\n%s", canon, s2.Canonical())
		}
	})
}
