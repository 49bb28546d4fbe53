package results

import (
	"encoding/binary"
	"encoding/json"
	"errors"
	"io"
	"math"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/parquet/file"

	"github.com/estbench/estbench/metrics"
)

// The files are read back with arrow-go's own Parquet reader (parquet/file),
// which is independent of the writer code here but not of the library.
// Debian bookworm has no python3-pyarrow (apt-cache policy python3-pyarrow
// finds no candidate), so no second implementation reads them in these
// tests by default; checkMagic checks the container layout against the
// format specification directly, and TestParquetIndependentReader reads the
// files with a JavaScript implementation when one is provided.

// checkMagic checks the framing of the Apache Parquet file format
// specification ("File Format"): the file starts and ends with the magic
// "PAR1", and the 4 bytes before the final magic are the little-endian
// length of the footer metadata, which lies inside the file.
func checkMagic(t *testing.T, path string) {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if len(b) < 12 || string(b[:4]) != "PAR1" || string(b[len(b)-4:]) != "PAR1" {
		t.Fatalf("%s: no PAR1 magic at both ends", path)
	}
	if n := binary.LittleEndian.Uint32(b[len(b)-8:]); int(n) > len(b)-12 || n == 0 {
		t.Fatalf("%s: footer length %d does not fit a file of %d bytes", path, n, len(b))
	}
}

// noTemps fails if dir holds anything but the named files.
func noTemps(t *testing.T, dir string, want ...string) {
	t.Helper()
	ents, err := os.ReadDir(dir)
	if err != nil {
		t.Fatal(err)
	}
	var got []string
	for _, e := range ents {
		got = append(got, e.Name())
	}
	slices.Sort(want)
	if !slices.Equal(got, want) {
		t.Errorf("%s holds %q, want %q", dir, got, want)
	}
}

func TestSummaryParquetRoundTrip(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "summary.parquet")
	rows := append(exactRows(), fixtureRows()...)
	if err := WriteSummaryParquet(path, rows); err != nil {
		t.Fatal(err)
	}
	checkMagic(t, path)
	noTemps(t, dir, "summary.parquet")
	got, err := ReadSummaryParquet(path)
	if err != nil {
		t.Fatal(err)
	}
	if len(got) != len(rows) {
		t.Fatalf("%d rows back, want %d", len(got), len(rows))
	}
	for i := range rows {
		w, g := &rows[i], &got[i]
		if g.Problem != w.Problem || g.Filter != w.Filter || g.Config != w.Config || g.Applicable != w.Applicable {
			t.Errorf("row %d: %q %q %q %v, want %q %q %q %v", i, g.Problem, g.Filter, g.Config, g.Applicable,
				w.Problem, w.Filter, w.Config, w.Applicable)
		}
		gr, gd := summaryCounts(g)
		wr, wd := summaryCounts(w)
		if gr != wr || gd != wd {
			t.Errorf("row %d: runs %d diverged %d, want %d %d", i, gr, gd, wr, wd)
		}
		gv, wv := summaryValues(g), summaryValues(w)
		for j := range wv {
			if !sameFloat(gv[j], wv[j]) {
				t.Errorf("row %d %s = %v, want %v", i, SummaryColumns[5+j], gv[j], wv[j])
			}
		}
		if noteOf(g) != noteOf(w) {
			t.Errorf("row %d note = %q, want %q", i, noteOf(g), noteOf(w))
		}
		if !math.IsNaN(g.NISInBounds) {
			t.Errorf("row %d: NISInBounds %v, want NaN (not in the file)", i, g.NISInBounds)
		}
	}
	// Warnings without "; " inside come back as the same list.
	if g, w := got[5].Warnings, rows[5].Warnings; !slices.Equal(g, w) {
		t.Errorf("warnings %q, want %q", g, w)
	}
	if got[3].Note != "kf needs a linear model; ungm is nonlinear" || got[3].Warnings != nil {
		t.Errorf("not-applicable row: Note %q Warnings %q", got[3].Note, got[3].Warnings)
	}
}

// runRow makes run r of a deterministic set: every 7th run diverged (NaN
// metrics), every 3rd without NIS, a pf half with ESS.
func runRow(rng *rand.Rand, r int) RunRow {
	row := RunRow{
		Problem: "ungm", Filter: "ekf", Config: "",
		RunStat: metrics.RunStat{
			Run: r, RMSE: rng.Float64() * 10, ANEES: rng.ExpFloat64(), ANIS: rng.ExpFloat64(),
			NsPerStep: 100 + rng.Float64()*1e4, MeanESS: math.NaN(),
			PredRMSE: 1 + float64(r%9)/8, Repairs: r % 4,
		},
	}
	if r%2 == 1 {
		row.Filter, row.Config = "pf", "particles="+strconv.Itoa(100*(1+r%5))
		row.MeanESS = rng.Float64() * 500
	}
	if r%3 == 0 {
		row.ANIS = math.NaN()
	}
	if r%7 == 0 {
		row.Diverged, row.DivStep, row.Reason = true, 1+r%50, "covariance not positive definite"
		row.RMSE, row.PredRMSE, row.ANEES, row.ANIS, row.MeanESS = math.NaN(), math.NaN(), math.NaN(), math.NaN(), math.NaN()
	}
	return row
}

func sameRun(a, b RunRow) bool {
	return a.Problem == b.Problem && a.Filter == b.Filter && a.Config == b.Config &&
		a.Run == b.Run && a.Diverged == b.Diverged && a.DivStep == b.DivStep && a.Reason == b.Reason &&
		sameFloat(a.RMSE, b.RMSE) && sameFloat(a.ANEES, b.ANEES) && sameFloat(a.ANIS, b.ANIS) &&
		sameFloat(a.NsPerStep, b.NsPerStep) && sameFloat(a.MeanESS, b.MeanESS)
}

// bufCaps records the capacities of a writer's column buffers.
func bufCaps(t *tableWriter) []int {
	var c []int
	for _, b := range t.cols {
		c = append(c, cap(b.bytes), cap(b.ends), cap(b.views), cap(b.ints), cap(b.bools), cap(b.flts), cap(b.defs))
	}
	return c
}

// TestRunsParquetStreaming writes 100k runs. The writer keeps no rows: its
// only per-row storage is the fixed column buffers sized for batchRows,
// which must not have grown, and the rows land in ceil(100000/rowGroupRows)
// row groups.
func TestRunsParquetStreaming(t *testing.T) {
	const n = 100_000
	dir := t.TempDir()
	path := filepath.Join(dir, "runs.parquet")
	w, err := NewRunsWriter(path)
	if err != nil {
		t.Fatal(err)
	}
	caps := bufCaps(w.t)
	rng := rand.New(rand.NewPCG(1, 2))
	for r := range n {
		if err := w.Write(runRow(rng, r)); err != nil {
			t.Fatal(err)
		}
		if w.t.n >= batchRows {
			t.Fatalf("after row %d the batch holds %d rows, more than batchRows", r, w.t.n)
		}
	}
	if got := bufCaps(w.t); !slices.Equal(got, caps) {
		t.Errorf("column buffers grew: capacities %v, were %v", got, caps)
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	if err := w.Close(); err == nil {
		t.Error("second Close: no error")
	}
	if err := w.Write(RunRow{}); err == nil {
		t.Error("Write after Close: no error")
	}
	checkMagic(t, path)
	noTemps(t, dir, "runs.parquet")

	fr, err := file.OpenParquetFile(path, false)
	if err != nil {
		t.Fatal(err)
	}
	if g, want := fr.NumRowGroups(), (n+rowGroupRows-1)/rowGroupRows; g != want || fr.NumRows() != n {
		t.Errorf("%d row groups, %d rows; want %d, %d", g, fr.NumRows(), want, n)
	}
	fr.Close()

	got, err := ReadRunsParquet(path)
	if err != nil {
		t.Fatal(err)
	}
	if len(got) != n {
		t.Fatalf("%d rows back, want %d", len(got), n)
	}
	rng = rand.New(rand.NewPCG(1, 2))
	bad := 0
	for r := range n {
		if want := runRow(rng, r); !sameRun(got[r], want) && bad < 5 {
			t.Errorf("run %d = %+v, want %+v", r, got[r], want)
			bad++
		}
	}
}

func TestCurvesParquetRoundTrip(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "curves.parquet")
	w, err := NewCurvesWriter(path)
	if err != nil {
		t.Fatal(err)
	}
	var want []CurveRow
	for k := 1; k <= 5000; k++ { // more than one batch
		c := CurveRow{Problem: "cv2d", Filter: "ukf", Config: "alpha=1",
			CurvePoint: metrics.CurvePoint{Step: k, RMSE: 1 / float64(k), ANEES: 4 + 1/float64(k),
				ANEESLo: 3.5, ANEESHi: 4.6, ANIS: math.NaN(), Runs: 100 - k%3}}
		if k%2 == 0 {
			c.ANIS = 2 + 1/float64(k)
		}
		want = append(want, c)
		if err := w.Write(c); err != nil {
			t.Fatal(err)
		}
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	checkMagic(t, path)
	got, err := ReadCurvesParquet(path)
	if err != nil {
		t.Fatal(err)
	}
	if len(got) != len(want) {
		t.Fatalf("%d rows back, want %d", len(got), len(want))
	}
	for i := range want {
		g, w := got[i], want[i]
		if g.Problem != w.Problem || g.Filter != w.Filter || g.Config != w.Config || g.Step != w.Step || g.Runs != w.Runs ||
			!sameFloat(g.RMSE, w.RMSE) || !sameFloat(g.ANEES, w.ANEES) || !sameFloat(g.ANEESLo, w.ANEESLo) ||
			!sameFloat(g.ANEESHi, w.ANEESHi) || !sameFloat(g.ANIS, w.ANIS) {
			t.Fatalf("row %d = %+v, want %+v", i, g, w)
		}
	}
	// A file of another table is refused with the column named.
	if _, err := ReadRunsParquet(path); err == nil || !strings.Contains(err.Error(), path) {
		t.Errorf("reading curves as runs: %v, want an error naming the file", err)
	}
}

func TestParquetAbortLeavesNothing(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "runs.parquet")
	w, err := NewRunsWriter(path)
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(3, 4))
	for r := range 5000 {
		w.Write(runRow(rng, r))
	}
	w.Abort()
	w.Abort() // twice is fine
	if err := w.Close(); err == nil {
		t.Error("Close after Abort: no error")
	}
	noTemps(t, dir)

	// An aborted rewrite keeps the old file.
	if err := os.WriteFile(path, []byte("old"), 0o644); err != nil {
		t.Fatal(err)
	}
	c, err := NewCurvesWriter(path)
	if err != nil {
		t.Fatal(err)
	}
	c.Write(CurveRow{Problem: "x"})
	c.Abort()
	if b, _ := os.ReadFile(path); string(b) != "old" {
		t.Errorf("aborted write changed the target to %q", b)
	}
	noTemps(t, dir, "runs.parquet")
}

// failAfter is a writer that fails once more than n bytes were written.
type failAfter struct {
	w io.Writer
	n int
}

var errDiskFull = errors.New("injected write failure")

func (f *failAfter) Write(p []byte) (int, error) {
	if len(p) > f.n {
		k, _ := f.w.Write(p[:f.n])
		f.n = 0
		return k, errDiskFull
	}
	f.n -= len(p)
	return f.w.Write(p)
}

func TestParquetFailedWriteLeavesNothing(t *testing.T) {
	// Failures at the magic number, inside the first pages and late in the
	// file; the last limit must be below the size of the whole file.
	limits := []int{0, 3, 100, 3000}
	whole := filepath.Join(t.TempDir(), "summary.parquet")
	if err := WriteSummaryParquet(whole, fixtureRows()); err != nil {
		t.Fatal(err)
	}
	fi, err := os.Stat(whole)
	if err != nil {
		t.Fatal(err)
	}
	if fi.Size() <= int64(limits[len(limits)-1]) {
		t.Fatalf("summary file of %d bytes is not larger than the last limit", fi.Size())
	}
	for _, limit := range limits {
		t.Run("after="+strconv.Itoa(limit), func(t *testing.T) {
			dir := t.TempDir()
			wrap := func(w io.Writer) io.Writer { return &failAfter{w: w, n: limit} }

			path := filepath.Join(dir, "summary.parquet")
			err := writeSummaryParquet(path, fixtureRows(), wrap)
			if !errors.Is(err, errDiskFull) {
				t.Errorf("summary: error %v, want the injected failure", err)
			}

			runs := filepath.Join(dir, "runs.parquet")
			tw, err := newTableWriter(runs, runSpecs, wrap)
			if err == nil {
				w := &RunsWriter{tw}
				rng := rand.New(rand.NewPCG(5, 6))
				for r := range 3 * batchRows {
					if w.Write(runRow(rng, r)) != nil {
						break
					}
				}
				err = w.Close()
			}
			if !errors.Is(err, errDiskFull) {
				t.Errorf("runs: error %v, want the injected failure", err)
			}
			noTemps(t, dir)
		})
	}
}

func TestWriteFileAtomic(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "out.txt")
	if err := WriteFileAtomic(path, func(w io.Writer) error {
		_, err := io.WriteString(w, "first")
		return err
	}); err != nil {
		t.Fatal(err)
	}
	if b, _ := os.ReadFile(path); string(b) != "first" {
		t.Fatalf("content %q", b)
	}
	if fi, _ := os.Stat(path); fi.Mode().Perm() != 0o644 {
		t.Errorf("mode %v, want 0644", fi.Mode().Perm())
	}
	// A write that fails half-way leaves the old content and no temporary file.
	err := WriteFileAtomic(path, func(w io.Writer) error {
		io.WriteString(w, strings.Repeat("x", 100_000)) // past the buffer, so bytes reach the disk
		return errDiskFull
	})
	if !errors.Is(err, errDiskFull) {
		t.Errorf("error %v, want the write's error", err)
	}
	if b, _ := os.ReadFile(path); string(b) != "first" {
		t.Errorf("failed write changed the file to %d bytes", len(b))
	}
	noTemps(t, dir, "out.txt")
	// A failed first write leaves no file at all.
	fresh := filepath.Join(dir, "fresh.txt")
	WriteFileAtomic(fresh, func(w io.Writer) error { return errDiskFull })
	noTemps(t, dir, "out.txt")
	// A directory that does not exist is an error naming the path.
	missingDir := filepath.Join(dir, "nope", "x.txt")
	if err := WriteFileAtomic(missingDir, func(io.Writer) error { return nil }); err == nil ||
		!strings.Contains(err.Error(), missingDir) {
		t.Errorf("missing directory: %v", err)
	}
}

// TestParquetIndependentReader reads the three files with hyparquet 1.31.5
// (Hyperparam, MIT licence, from the npm registry), a JavaScript Parquet
// reader that shares no code with arrow-go, through
// testdata/check_parquet.mjs. It needs node and the package folder in
// ESTBENCH_HYPARQUET (npm install hyparquet@1.31.5; the folder is
// node_modules/hyparquet) and is skipped without them.
func TestParquetIndependentReader(t *testing.T) {
	pkg := os.Getenv("ESTBENCH_HYPARQUET")
	if pkg == "" {
		t.Skip("set ESTBENCH_HYPARQUET to a hyparquet package folder (npm install hyparquet@1.31.5) to check the files with a second Parquet reader")
	}
	node, err := exec.LookPath("node")
	if err != nil {
		t.Skip("node not found")
	}
	dir := t.TempDir()
	type table struct {
		Columns []string `json:"columns"`
		Rows    [][]any  `json:"rows"`
	}
	num := func(v float64) any {
		if math.IsNaN(v) {
			return nil
		}
		return v
	}
	exp := map[string]table{}

	sum := fixtureRows()
	if err := WriteSummaryParquet(filepath.Join(dir, "summary.parquet"), sum); err != nil {
		t.Fatal(err)
	}
	st := table{Columns: SummaryColumns}
	for i := range sum {
		r := &sum[i]
		runs, div := summaryCounts(r)
		row := []any{r.Problem, r.Filter, r.Config, runs, div}
		for _, v := range summaryValues(r) {
			row = append(row, num(v))
		}
		st.Rows = append(st.Rows, append(row, noteOf(r)))
	}
	exp["summary.parquet"] = st

	rw, err := NewRunsWriter(filepath.Join(dir, "runs.parquet"))
	if err != nil {
		t.Fatal(err)
	}
	rt := table{Columns: RunColumns}
	rng := rand.New(rand.NewPCG(7, 8))
	for r := range 2 * batchRows {
		x := runRow(rng, r)
		if err := rw.Write(x); err != nil {
			t.Fatal(err)
		}
		rt.Rows = append(rt.Rows, []any{x.Problem, x.Filter, x.Config, x.Run, x.Diverged, x.DivStep, x.Reason,
			num(x.RMSE), num(x.PredRMSE), num(x.ANEES), num(x.ANIS), num(x.NsPerStep), num(x.MeanESS), x.Repairs})
	}
	if err := rw.Close(); err != nil {
		t.Fatal(err)
	}
	exp["runs.parquet"] = rt

	cw, err := NewCurvesWriter(filepath.Join(dir, "curves.parquet"))
	if err != nil {
		t.Fatal(err)
	}
	ct := table{Columns: CurveColumns}
	for k := 1; k <= 50; k++ {
		c := CurveRow{Problem: "cv2d", Filter: "ukf", Config: "alpha=1", CurvePoint: metrics.CurvePoint{
			Step: k, RMSE: 1 / float64(k), PredRMSE: 2 / float64(k), ANEES: 4 + 1/float64(k), ANEESLo: 3.5, ANEESHi: 4.6, ANIS: math.NaN(), Runs: 100}}
		if err := cw.Write(c); err != nil {
			t.Fatal(err)
		}
		ct.Rows = append(ct.Rows, []any{c.Problem, c.Filter, c.Config, c.Step,
			num(c.RMSE), num(c.PredRMSE), num(c.ANEES), num(c.ANEESLo), num(c.ANEESHi), num(c.ANIS), c.Runs})
	}
	if err := cw.Close(); err != nil {
		t.Fatal(err)
	}
	exp["curves.parquet"] = ct

	b, err := json.Marshal(exp)
	if err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(dir, "expected.json"), b, 0o644); err != nil {
		t.Fatal(err)
	}
	out, err := exec.Command(node, filepath.Join("testdata", "check_parquet.mjs"), pkg, dir).CombinedOutput()
	if err != nil || strings.TrimSpace(string(out)) != "ok" {
		t.Fatalf("hyparquet check failed (%v):\n%s", err, out)
	}
}

// BenchmarkRunsWriter measures one Write, flushes and row groups included
// (amortised); the Close of the file is outside the loop.
func BenchmarkRunsWriter(b *testing.B) {
	w, err := NewRunsWriter(filepath.Join(b.TempDir(), "runs.parquet"))
	if err != nil {
		b.Fatal(err)
	}
	row := runRow(rand.New(rand.NewPCG(9, 10)), 1)
	b.ReportAllocs()
	for i := 0; b.Loop(); i++ {
		row.Run = i
		if err := w.Write(row); err != nil {
			b.Fatal(err)
		}
	}
	b.StopTimer()
	if err := w.Close(); err != nil {
		b.Fatal(err)
	}
}
