package results

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"flag"
	"io"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/estbench/estbench/metrics"
)

var update = flag.Bool("update", false, "rewrite the golden files under testdata/")

var nan = math.NaN()

// fixtureRows is a constructed summary (not the output of a run): a normal
// row, a pair that does not apply, a row without NIS, rows with warnings,
// and magnitudes from 1e-4 to 1e1 (RMSE) and from 1e2 to 1e5 ns (time). The
// bounds are of the right size for their degrees of freedom but are typed
// in, not computed: the tests here check layout and number handling only.
func fixtureRows() []SummaryRow {
	return []SummaryRow{
		{
			Problem: "cv2d", Filter: "kf", Applicable: true,
			Summary: metrics.Summary{
				Runs: 100, RMSE: 0.52130987654321, RMSELo: 0.4987, RMSEHi: 0.5471, PredRMSE: 1.7342,
				ANEES: 4.0123, ANEESLo: 3.8902, ANEESHi: 4.1118, ANEESRunMedian: 3.9871, NEESInBounds: 0.953,
				ANIS: 2.0087, ANISLo: 1.9453, ANISHi: 2.0561, NISInBounds: 0.948,
				NsPerStep: 412.7, MeanESS: nan,
			},
			AllocsPerStep: 0,
			EvalsPerStep:  4,
		},
		{
			Problem: "ungm", Filter: "kf",
			Note:    "kf needs a linear model; ungm is nonlinear",
			Summary: metrics.Summary{RMSE: 1, ANEES: 1}, // ignored: the pair does not apply
		},
		{
			Problem: "ungm", Filter: "ekf", Applicable: true,
			Summary: metrics.Summary{
				Runs: 100, RMSE: 14.9031, RMSELo: 13.2, RMSEHi: 16.75, PredRMSE: 21.06,
				ANEES: 57.31, ANEESLo: 0.9461, ANEESHi: 1.0559, ANEESRunMedian: 3.874, NEESInBounds: 0.12,
				ANIS: 3.104, ANISLo: 0.9461, ANISHi: 1.0559, NISInBounds: 0.41,
				NsPerStep: 1890.25, MeanESS: nan,
			},
			AllocsPerStep: 0,
			EvalsPerStep:  4,
		},
		{
			Problem: "ungm", Filter: "pf", Config: "particles=1000", Applicable: true,
			Summary: metrics.Summary{
				Runs: 100, Diverged: 3, RMSE: 4.871, RMSELo: 4.52, RMSEHi: 5.233, PredRMSE: nan,
				ANEES: 1.0204, ANEESLo: 0.9453, ANEESHi: 1.0567, ANEESRunMedian: 0.9912, NEESInBounds: 0.9,
				ANIS: nan, ANISLo: nan, ANISHi: nan, NISInBounds: nan,
				NsPerStep: 241300, MeanESS: 412.5,
				Warnings: []string{"3 of 100 runs diverged (first: run 17, step 42: weights degenerate)"},
			},
			AllocsPerStep: 0,
			EvalsPerStep:  2000,
		},
		{
			Problem: "ctrb", Filter: "ukf", Config: "alpha=0.001 kappa=0", Applicable: true,
			Summary: metrics.Summary{
				Runs: 8, RMSE: 0.000123456, RMSELo: 0.000101, RMSEHi: 0.000149, PredRMSE: 0.0412,
				ANEES: 1.62, ANEESLo: 2.4573, ANEESHi: 3.5812, ANEESRunMedian: 1.58, NEESInBounds: 0.047,
				ANIS: 0.95, ANISLo: 0.8112, ANISHi: 1.2074, NISInBounds: 0.93,
				NsPerStep: 2950, MeanESS: nan,
				Warnings: []string{"bounds from 8 runs are loose: use --runs 20 or more"},
			},
			AllocsPerStep: 0.5,
			EvalsPerStep:  22,
		},
		{
			Problem: "ctrb", Filter: "ekf", Applicable: true,
			Summary: metrics.Summary{
				Runs: 8, RMSE: 0.00031, RMSELo: 0.00027, RMSEHi: 0.00036, PredRMSE: 0.0391,
				ANEES: 3.01, ANEESLo: 2.4573, ANEESHi: 3.5812, ANEESRunMedian: 2.97, NEESInBounds: 0.94,
				ANIS: 1.01, ANISLo: 0.8112, ANISHi: 1.2074, NISInBounds: 0.95,
				NsPerStep: 1204.5, MeanESS: nan,
				Warnings: []string{"bounds from 8 runs are loose: use --runs 20 or more"},
			},
			AllocsPerStep: 0,
			EvalsPerStep:  4,
		},
		{
			Problem: "track", Filter: "kf", Applicable: true,
			Summary: metrics.Summary{
				Runs: 20, RMSE: nan, RMSELo: nan, RMSEHi: nan, PredRMSE: 14.27,
				ANEES: nan, ANEESLo: nan, ANEESHi: nan, ANEESRunMedian: nan, NEESInBounds: nan,
				ANIS: 2.31, ANISLo: 1.8137, ANISHi: 2.2063, NISInBounds: 0.9,
				NsPerStep: 390.2, MeanESS: nan,
				Warnings: []string{metrics.NoTruthWarning},
			},
			AllocsPerStep: 0,
			EvalsPerStep:  4,
		},
	}
}

func fixtureProvenance() Provenance {
	return Provenance{
		Suite:       "harbour-launch",
		SuiteSHA256: "9f2c4e1a7b3d5f6081a2c3e4d5f60718293a4b5c6d7e8f90a1b2c3d4e5f60718",
		Seed:        20240611,
		Runs:        100,
		Tool:        "estbench v0.1.0",
		Date:        time.Date(2025, 3, 14, 9, 26, 53, 0, time.UTC),
	}
}

// checkGolden compares got with testdata/name; with -update it rewrites the
// file instead. On a mismatch it writes testdata/name.got and reports the
// first differing lines.
func checkGolden(t *testing.T, name string, got []byte) {
	t.Helper()
	path := filepath.Join("testdata", name)
	if *update {
		if err := os.WriteFile(path, got, 0o644); err != nil {
			t.Fatal(err)
		}
		return
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatalf("%v (run go test ./results -update to create it)", err)
	}
	if bytes.Equal(got, want) {
		os.Remove(path + ".got")
		return
	}
	os.WriteFile(path+".got", got, 0o644)
	t.Errorf("%s differs from the golden file; got written to %s.got\n%s", name, path, diffSnippet(want, got))
}

// diffSnippet shows the first few lines that differ.
func diffSnippet(want, got []byte) string {
	wl := strings.Split(string(want), "\n")
	gl := strings.Split(string(got), "\n")
	var b strings.Builder
	shown := 0
	for i := 0; i < max(len(wl), len(gl)) && shown < 5; i++ {
		var w, g string
		if i < len(wl) {
			w = wl[i]
		}
		if i < len(gl) {
			g = gl[i]
		}
		if w != g {
			b.WriteString("line " + strconv.Itoa(i+1) + ":\n  want: " + w + "\n  got:  " + g + "\n")
			shown++
		}
	}
	return b.String()
}

func TestSummaryGolden(t *testing.T) {
	rows := fixtureRows()
	before := fixtureRows()
	prov := fixtureProvenance()
	for _, tc := range []struct{ format, file string }{
		{"table", "summary.table.txt"},
		{"markdown", "summary.markdown.md"},
		{"csv", "summary.csv"},
		{"latex", "summary.latex.tex"},
		{"json", "summary.json"},
	} {
		t.Run(tc.format, func(t *testing.T) {
			var buf bytes.Buffer
			if err := WriteSummary(&buf, tc.format, rows, prov); err != nil {
				t.Fatal(err)
			}
			checkGolden(t, tc.file, buf.Bytes())
		})
	}
	t.Run("summary.md", func(t *testing.T) {
		path := filepath.Join(t.TempDir(), "summary.md")
		if err := WriteSummaryMD(path, rows, prov); err != nil {
			t.Fatal(err)
		}
		got, err := os.ReadFile(path)
		if err != nil {
			t.Fatal(err)
		}
		checkGolden(t, "summary.md", got)
	})
	if !rowsEqual(rows, before) {
		t.Error("WriteSummary modified its rows")
	}
}

func rowsEqual(a, b []SummaryRow) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		x, y := a[i], b[i]
		if x.Problem != y.Problem || x.Filter != y.Filter || x.Config != y.Config ||
			x.Applicable != y.Applicable || x.Note != y.Note ||
			x.Runs != y.Runs || x.Diverged != y.Diverged ||
			!slices.Equal(x.Warnings, y.Warnings) || !sameFloat(x.MeanESS, y.MeanESS) ||
			!sameFloat(x.NISInBounds, y.NISInBounds) {
			return false
		}
		vx, vy := summaryValues(&x), summaryValues(&y)
		for j := range vx {
			if !sameFloat(vx[j], vy[j]) {
				return false
			}
		}
	}
	return true
}

// sameFloat is bit equality with every NaN equal to every NaN.
func sameFloat(a, b float64) bool {
	return a == b && math.Signbit(a) == math.Signbit(b) || math.IsNaN(a) && math.IsNaN(b)
}

func TestUnknownFormat(t *testing.T) {
	err := WriteSummary(io.Discard, "html", fixtureRows(), Provenance{})
	if err == nil {
		t.Fatal("no error for format html")
	}
	for _, f := range Formats {
		if !strings.Contains(err.Error(), f) {
			t.Errorf("error %q does not name format %q", err, f)
		}
	}
	path := filepath.Join(t.TempDir(), "summary.html")
	if err := WriteSummaryFile(path, "html", fixtureRows(), Provenance{}); err == nil {
		t.Error("WriteSummaryFile: no error for format html")
	}
	if _, err := os.Stat(path); !os.IsNotExist(err) {
		t.Errorf("WriteSummaryFile with a bad format left %s", path)
	}
}

// exactRows carries float64 values whose shortest decimal needs all 17
// digits, a subnormal, the largest finite value, a negative zero and ±Inf,
// to check that csv and json keep the exact bits.
func exactRows() []SummaryRow {
	r := SummaryRow{
		Problem: `odd "name", with comma`, Filter: "ukf", Config: "alpha=0.5", Applicable: true,
		Summary: metrics.Summary{
			Runs: 3, Diverged: 1,
			RMSE: math.Nextafter(0.3, 1), RMSELo: 1.0 / 3, RMSEHi: 2.0 / 3,
			ANEES: math.Pi * 1e-7, ANEESLo: 5e-324, ANEESHi: math.MaxFloat64, ANEESRunMedian: math.Nextafter(math.Pi*1e-7, 0),
			NEESInBounds: math.Copysign(0, -1),
			ANIS:         math.Inf(1), ANISLo: nan, ANISHi: math.Nextafter(1, 2),
			NsPerStep: 123456789.123456789, MeanESS: nan,
			Warnings: []string{"first; with semicolon", "second"},
		},
		AllocsPerStep: 1e-300,
		EvalsPerStep:  2.0 / 3,
	}
	return []SummaryRow{r, fixtureRows()[1]}
}

// The CSV reader is encoding/csv (RFC 4180, Shafranovich 2005, "Common
// Format and MIME Type for Comma-Separated Values (CSV) Files"); exact
// round-trip of strconv 'g' -1 is strconv's documented guarantee
// (shortest decimal that parses back to the same float64).
func TestCSVRoundTrip(t *testing.T) {
	rows := exactRows()
	var buf bytes.Buffer
	if err := WriteSummary(&buf, "csv", rows, Provenance{}); err != nil {
		t.Fatal(err)
	}
	recs, err := csv.NewReader(&buf).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if !slices.Equal(recs[0], SummaryColumns) {
		t.Fatalf("header = %q, want %q", recs[0], SummaryColumns)
	}
	if len(recs) != 1+len(rows) {
		t.Fatalf("%d records, want %d", len(recs), 1+len(rows))
	}
	got := recs[1]
	if got[0] != rows[0].Problem || got[3] != "3" || got[4] != "1" {
		t.Errorf("text and counts = %q", got[:5])
	}
	want := summaryValues(&rows[0])
	for j, v := range want {
		cell := got[5+j]
		col := SummaryColumns[5+j]
		if math.IsNaN(v) {
			if cell != "" {
				t.Errorf("%s: NaN written as %q, want empty", col, cell)
			}
			continue
		}
		back, err := strconv.ParseFloat(cell, 64)
		if err != nil || !sameFloat(back, v) {
			t.Errorf("%s: %q parses to %v (%v), want exactly %v", col, cell, back, err, v)
		}
	}
	if note := got[len(got)-1]; note != "first; with semicolon; second" {
		t.Errorf("note = %q", note)
	}
	na := recs[2]
	if na[3] != "0" || na[4] != "0" || na[len(na)-1] != "kf needs a linear model; ungm is nonlinear" {
		t.Errorf("not-applicable record = %q", na)
	}
	for j := 5; j < len(na)-1; j++ {
		if na[j] != "" {
			t.Errorf("not-applicable %s = %q, want empty", SummaryColumns[j], na[j])
		}
	}
}

// The JSON reader is encoding/json (RFC 8259, Bray 2017, "The JavaScript
// Object Notation (JSON) Data Interchange Format"): its decoder gives the
// key order; numbers must parse back to the same float64.
func TestJSONColumnsAndNulls(t *testing.T) {
	rows := append(exactRows(), fixtureRows()...)
	var buf bytes.Buffer
	if err := WriteSummary(&buf, "json", rows, Provenance{}); err != nil {
		t.Fatal(err)
	}
	raw := buf.Bytes()

	// Key order, object by object, from the token stream.
	dec := json.NewDecoder(bytes.NewReader(raw))
	dec.UseNumber()
	if tok, err := dec.Token(); err != nil || tok != json.Delim('[') {
		t.Fatalf("first token %v, %v; want [", tok, err)
	}
	for obj := 0; dec.More(); obj++ {
		if tok, err := dec.Token(); err != nil || tok != json.Delim('{') {
			t.Fatalf("object %d: token %v, %v; want {", obj, tok, err)
		}
		var keys []string
		for dec.More() {
			k, err := dec.Token()
			if err != nil {
				t.Fatal(err)
			}
			keys = append(keys, k.(string))
			var v any
			if err := dec.Decode(&v); err != nil {
				t.Fatal(err)
			}
		}
		dec.Token() // }
		if !slices.Equal(keys, SummaryColumns) {
			t.Errorf("object %d keys = %q, want %q", obj, keys, SummaryColumns)
		}
	}

	var objs []map[string]any
	d := json.NewDecoder(bytes.NewReader(raw))
	d.UseNumber()
	if err := d.Decode(&objs); err != nil {
		t.Fatal(err)
	}
	if len(objs) != len(rows) {
		t.Fatalf("%d objects, want %d", len(objs), len(rows))
	}
	for i, o := range objs {
		r := &rows[i]
		if len(o) != len(SummaryColumns) {
			t.Errorf("object %d has %d keys, want %d", i, len(o), len(SummaryColumns))
		}
		runs, div := summaryCounts(r)
		if o["runs"] != json.Number(strconv.Itoa(runs)) || o["diverged"] != json.Number(strconv.Itoa(div)) {
			t.Errorf("object %d: runs %v diverged %v, want %d %d", i, o["runs"], o["diverged"], runs, div)
		}
		if o["problem"] != r.Problem || o["note"] != noteOf(r) {
			t.Errorf("object %d: problem %v note %v", i, o["problem"], o["note"])
		}
		for j, v := range summaryValues(r) {
			col := SummaryColumns[5+j]
			got := o[col]
			if math.IsNaN(v) || math.IsInf(v, 0) {
				if got != nil {
					t.Errorf("object %d %s = %v, want null", i, col, got)
				}
				continue
			}
			n, ok := got.(json.Number)
			if !ok {
				t.Errorf("object %d %s = %v (%T), want a number", i, col, got, got)
				continue
			}
			back, err := strconv.ParseFloat(string(n), 64)
			if err != nil || !sameFloat(back, v) {
				t.Errorf("object %d %s = %s, want exactly %v", i, col, n, v)
			}
		}
	}
	// The not-applicable pair: runs 0 and every metric null even though its
	// Summary holds numbers.
	na := objs[1]
	if na["rmse"] != nil || na["anees"] != nil || na["runs"] != json.Number("0") {
		t.Errorf("not-applicable object = %v", na)
	}
}
