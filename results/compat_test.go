package results

import (
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/parquet/file"

	"github.com/estbench/estbench/metrics"
)

// The column lists of the files of earlier versions, as results/rows.go had
// them at the change named (git log -p results/rows.go); typed in here, not
// derived from SummaryColumns and the later lists, so that a wrong later
// list is caught.
var olderColumns = []struct {
	version               string
	summary, runs, curves []string
	summaryGone, runsGone []string // the columns of today's lists they lack
	curvesGone            []string //
}{
	{
		version: "first (ba0a25d, the first Parquet files)",
		summary: []string{"problem", "filter", "config", "runs", "diverged",
			"rmse", "rmse_ci_lo", "rmse_ci_hi",
			"anees", "anees_bound_lo", "anees_bound_hi", "nees_in_bounds",
			"anis", "anis_bound_lo", "anis_bound_hi",
			"ns_per_step", "allocs_per_step", "note"},
		runs: []string{"problem", "filter", "config", "run", "diverged", "div_step", "reason",
			"rmse", "anees", "anis", "ns_per_step", "mean_ess"},
		curves: []string{"problem", "filter", "config", "step",
			"rmse", "anees", "anees_bound_lo", "anees_bound_hi", "anis", "runs"},
		summaryGone: []string{"anees_run_median", "pred_rmse", "evals_per_step", "mean_ess", "repairs"},
		runsGone:    []string{"pred_rmse", "repairs"},
		curvesGone:  []string{"pred_rmse"},
	},
	{
		version: "with repairs (5d10084)",
		summary: []string{"problem", "filter", "config", "runs", "diverged",
			"rmse", "rmse_ci_lo", "rmse_ci_hi",
			"anees", "anees_bound_lo", "anees_bound_hi", "nees_in_bounds",
			"anis", "anis_bound_lo", "anis_bound_hi",
			"ns_per_step", "allocs_per_step", "mean_ess", "repairs", "note"},
		runs: []string{"problem", "filter", "config", "run", "diverged", "div_step", "reason",
			"rmse", "anees", "anis", "ns_per_step", "mean_ess", "repairs"},
		curves: []string{"problem", "filter", "config", "step",
			"rmse", "anees", "anees_bound_lo", "anees_bound_hi", "anis", "runs"},
		summaryGone: []string{"anees_run_median", "pred_rmse", "evals_per_step"},
		runsGone:    []string{"pred_rmse"},
		curvesGone:  []string{"pred_rmse"},
	},
	{
		version: "with evals_per_step (d8b2195)",
		summary: []string{"problem", "filter", "config", "runs", "diverged",
			"rmse", "rmse_ci_lo", "rmse_ci_hi",
			"anees", "anees_bound_lo", "anees_bound_hi", "nees_in_bounds",
			"anis", "anis_bound_lo", "anis_bound_hi",
			"ns_per_step", "allocs_per_step", "evals_per_step", "mean_ess", "repairs", "note"},
		runs: []string{"problem", "filter", "config", "run", "diverged", "div_step", "reason",
			"rmse", "anees", "anis", "ns_per_step", "mean_ess", "repairs"},
		curves: []string{"problem", "filter", "config", "step",
			"rmse", "anees", "anees_bound_lo", "anees_bound_hi", "anis", "runs"},
		summaryGone: []string{"anees_run_median", "pred_rmse"},
		runsGone:    []string{"pred_rmse"},
		curvesGone:  []string{"pred_rmse"},
	},
	{
		version: "with pred_rmse (ebe2dde)",
		summary: []string{"problem", "filter", "config", "runs", "diverged",
			"rmse", "rmse_ci_lo", "rmse_ci_hi", "pred_rmse",
			"anees", "anees_bound_lo", "anees_bound_hi", "nees_in_bounds",
			"anis", "anis_bound_lo", "anis_bound_hi",
			"ns_per_step", "allocs_per_step", "evals_per_step", "mean_ess", "repairs", "note"},
		runs: []string{"problem", "filter", "config", "run", "diverged", "div_step", "reason",
			"rmse", "pred_rmse", "anees", "anis", "ns_per_step", "mean_ess", "repairs"},
		curves: []string{"problem", "filter", "config", "step",
			"rmse", "pred_rmse", "anees", "anees_bound_lo", "anees_bound_hi", "anis", "runs"},
		summaryGone: []string{"anees_run_median"},
	},
}

// rewriteAs rewrites the file at path, written with specs, so that it
// holds only the columns names, in that order, as a file of an earlier
// version does; a name not in specs becomes a float column of 0.5s (a
// column of a later version). It checks that the file then has exactly
// those columns.
func rewriteAs(t *testing.T, path string, specs []colSpec, names []string) {
	t.Helper()
	tb, err := readTable(path, specs)
	if err != nil {
		t.Fatal(err)
	}
	var out []colSpec
	var from []int // index in specs of each column of out; -1 for a new one
	for _, n := range names {
		i := slices.IndexFunc(specs, func(s colSpec) bool { return s.name == n })
		if i < 0 {
			out = append(out, colSpec{name: n, kind: kFloat})
		} else {
			out = append(out, specs[i])
		}
		from = append(from, i)
	}
	w, err := newTableWriter(path, out, nil)
	if err != nil {
		t.Fatal(err)
	}
	for k := range tb.rows {
		for j, i := range from {
			switch {
			case i < 0:
				w.float(j, 0.5)
			case out[j].kind == kString:
				w.str(j, tb.strs[i][k])
			case out[j].kind == kInt:
				w.int(j, int(tb.ints[i][k]))
			case out[j].kind == kBool:
				w.bool(j, tb.bools[i][k])
			default:
				w.float(j, tb.flts[i][k])
			}
		}
		if err := w.endRow(); err != nil {
			t.Fatal(err)
		}
	}
	if err := w.close(); err != nil {
		t.Fatal(err)
	}
	if got := fileColumns(t, path); !slices.Equal(got, names) {
		t.Fatalf("%s: rewritten with columns %q, want %q", path, got, names)
	}
}

// fileColumns lists the columns of a Parquet file, read with arrow-go's
// reader.
func fileColumns(t *testing.T, path string) []string {
	t.Helper()
	fr, err := file.OpenParquetFile(path, false)
	if err != nil {
		t.Fatal(err)
	}
	defer fr.Close()
	var n []string
	for _, c := range fr.MetaData().Schema.Columns() {
		n = append(n, c.Name())
	}
	return n
}

// without returns names without the ones in drop.
func without(names []string, drop ...string) []string {
	return slices.DeleteFunc(slices.Clone(names), func(n string) bool { return slices.Contains(drop, n) })
}

// The typed-in lists agree with today's: each is today's list without the
// columns it lacks, in the same order, and those are exactly the columns the
// reader lets be absent.
func TestOlderColumnLists(t *testing.T) {
	for _, v := range olderColumns {
		for _, c := range []struct {
			file           string
			old, now, gone []string
			later          []string
		}{
			{"summary", v.summary, SummaryColumns, v.summaryGone, summaryLater},
			{"runs", v.runs, RunColumns, v.runsGone, runLater},
			{"curves", v.curves, CurveColumns, v.curvesGone, curveLater},
		} {
			if got := without(c.now, c.gone...); !slices.Equal(got, c.old) {
				t.Errorf("%s %s: today's columns without %q are %q, want %q", v.version, c.file, c.gone, got, c.old)
			}
			for _, g := range c.gone {
				if !slices.Contains(c.later, g) {
					t.Errorf("%s %s: %s is not in the file but not marked as added later", v.version, c.file, g)
				}
			}
		}
	}
}

// A summary of each earlier version reads back: the columns it has with
// their values, the ones it lacks as NaN (Repairs, a count, as 0).
func TestReadOlderSummary(t *testing.T) {
	rows := append(exactRows(), fixtureRows()...)
	for i := range rows {
		rows[i].Repairs = 3 + i // nonzero, so that a 0 back says the column was absent
	}
	for _, v := range olderColumns {
		path := filepath.Join(t.TempDir(), "summary.parquet")
		if err := WriteSummaryParquet(path, rows); err != nil {
			t.Fatal(err)
		}
		rewriteAs(t, path, summarySpecs, v.summary)
		got, err := ReadSummaryParquet(path)
		if err != nil {
			t.Fatalf("%s: %v", v.version, err)
		}
		if len(got) != len(rows) {
			t.Fatalf("%s: %d rows back, want %d", v.version, len(got), len(rows))
		}
		for i := range rows {
			w, g := &rows[i], &got[i]
			if g.Problem != w.Problem || g.Filter != w.Filter || g.Config != w.Config || g.Applicable != w.Applicable ||
				noteOf(g) != noteOf(w) {
				t.Errorf("%s row %d: %q %q %q %v %q, want %q %q %q %v %q", v.version, i,
					g.Problem, g.Filter, g.Config, g.Applicable, noteOf(g), w.Problem, w.Filter, w.Config, w.Applicable, noteOf(w))
			}
			gv, wv := summaryValues(g), summaryValues(w)
			for j := range wv {
				col := SummaryColumns[5+j]
				want := wv[j]
				if slices.Contains(v.summaryGone, col) && w.Applicable {
					want = math.NaN()
					if col == "repairs" {
						want = 0
					}
				}
				if !sameFloat(gv[j], want) {
					t.Errorf("%s row %d %s = %v, want %v", v.version, i, col, gv[j], want)
				}
			}
		}
	}
}

func TestReadOlderRunsAndCurves(t *testing.T) {
	var runs []RunRow
	for r := range 40 {
		st := metrics.RunStat{Run: r, RMSE: 1 + float64(r)/10, PredRMSE: 2 + float64(r)/10, ANEES: 4, ANIS: 2,
			NsPerStep: 900, MeanESS: 80, Repairs: 1 + r%3}
		if r == 7 {
			st.Diverged, st.DivStep, st.Reason, st.RMSE, st.PredRMSE, st.ANEES = true, 5, "NaN estimate", nan, nan, nan
		}
		runs = append(runs, RunRow{Problem: "cv2d", Filter: "pf", Config: "particles=500", RunStat: st})
	}
	var curves []CurveRow
	for k := 1; k <= 30; k++ {
		curves = append(curves, CurveRow{Problem: "cv2d", Filter: "ukf", CurvePoint: metrics.CurvePoint{
			Step: k, RMSE: 1 / float64(k), PredRMSE: 2 / float64(k), ANEES: 4, ANEESLo: 3.5, ANEESHi: 4.6, ANIS: 2, Runs: 40}})
	}
	for _, v := range olderColumns {
		dir := t.TempDir()
		rp, cp := filepath.Join(dir, "runs.parquet"), filepath.Join(dir, "curves.parquet")
		rw, err := NewRunsWriter(rp)
		if err != nil {
			t.Fatal(err)
		}
		for _, r := range runs {
			rw.Write(r)
		}
		if err := rw.Close(); err != nil {
			t.Fatal(err)
		}
		cw, err := NewCurvesWriter(cp)
		if err != nil {
			t.Fatal(err)
		}
		for _, c := range curves {
			cw.Write(c)
		}
		if err := cw.Close(); err != nil {
			t.Fatal(err)
		}
		rewriteAs(t, rp, runSpecs, v.runs)
		rewriteAs(t, cp, curveSpecs, v.curves)

		gr, err := ReadRunsParquet(rp)
		if err != nil {
			t.Fatalf("%s: %v", v.version, err)
		}
		for i, w := range runs {
			if slices.Contains(v.runsGone, "pred_rmse") {
				w.PredRMSE = nan
			}
			if slices.Contains(v.runsGone, "repairs") {
				w.Repairs = 0
			}
			g := gr[i]
			if !sameRun(g, w) || !sameFloat(g.PredRMSE, w.PredRMSE) || g.Repairs != w.Repairs {
				t.Errorf("%s: run %d = %+v, want %+v", v.version, i, g, w)
			}
		}
		gc, err := ReadCurvesParquet(cp)
		if err != nil {
			t.Fatalf("%s: %v", v.version, err)
		}
		for i, w := range curves {
			if slices.Contains(v.curvesGone, "pred_rmse") {
				w.PredRMSE = nan
			}
			g := gc[i]
			if g.Problem != w.Problem || g.Step != w.Step || g.Runs != w.Runs || !sameFloat(g.RMSE, w.RMSE) ||
				!sameFloat(g.PredRMSE, w.PredRMSE) || !sameFloat(g.ANEES, w.ANEES) || !sameFloat(g.ANEESHi, w.ANEESHi) {
				t.Errorf("%s: step %d = %+v, want %+v", v.version, i, g, w)
			}
		}
	}
}

// Columns a reader does not know are ignored, and columns are found by
// name in any order; a required column missing, or one of the wrong type,
// is an error naming the file and the column.
func TestReadColumnRules(t *testing.T) {
	dir := t.TempDir()
	rows := fixtureRows()
	write := func(name string) string {
		p := filepath.Join(dir, name)
		if err := WriteSummaryParquet(p, rows); err != nil {
			t.Fatal(err)
		}
		return p
	}

	// A file of a later version: a column added after this reader, and the
	// columns in another order.
	p := write("later.parquet")
	later := append(slices.Clone(SummaryColumns), "future_metric")
	slices.Reverse(later)
	rewriteAs(t, p, summarySpecs, later)
	got, err := ReadSummaryParquet(p)
	if err != nil {
		t.Fatal(err)
	}
	if len(got) != len(rows) {
		t.Fatalf("%d rows back, want %d", len(got), len(rows))
	}
	for i := range rows {
		if g, w := summaryValues(&got[i]), summaryValues(&rows[i]); !slices.EqualFunc(g[:], w[:], sameFloat) ||
			got[i].Problem != rows[i].Problem || noteOf(&got[i]) != noteOf(&rows[i]) {
			t.Errorf("a file with an unknown column and another order: row %d = %+v, want %+v", i, got[i], rows[i])
		}
	}

	// Required columns stay required.
	for _, col := range []string{"problem", "runs", "rmse", "note", "nees_in_bounds"} {
		p := write("no-" + col + ".parquet")
		rewriteAs(t, p, summarySpecs, without(SummaryColumns, col))
		_, err := ReadSummaryParquet(p)
		if err == nil || !strings.Contains(err.Error(), p+": no column "+col+" ") {
			t.Errorf("without %s: %v, want an error naming %s and the column", col, err, p)
		}
	}
	// So does runs.parquet's mean_ess, which the first version had.
	rp := filepath.Join(dir, "runs.parquet")
	rw, err := NewRunsWriter(rp)
	if err != nil {
		t.Fatal(err)
	}
	rw.Write(RunRow{Problem: "cv2d", Filter: "kf", RunStat: metrics.RunStat{RMSE: 1, ANEES: 4, ANIS: 2, MeanESS: nan}})
	if err := rw.Close(); err != nil {
		t.Fatal(err)
	}
	rewriteAs(t, rp, runSpecs, without(RunColumns, "mean_ess"))
	if _, err := ReadRunsParquet(rp); err == nil || !strings.Contains(err.Error(), rp+": no column mean_ess ") {
		t.Errorf("runs without mean_ess: %v, want an error naming the file and the column", err)
	}

	// A column of the wrong type, including a later one.
	for _, c := range []struct {
		col  string
		kind colKind
		want string
	}{
		{"runs", kFloat, "column runs is optional DOUBLE, want required INT64"},
		{"rmse", kString, "column rmse is required BYTE_ARRAY, want optional DOUBLE"},
		{"pred_rmse", kInt, "column pred_rmse is required INT64, want optional DOUBLE"},
	} {
		p := filepath.Join(dir, "type-"+c.col+".parquet")
		specs := slices.Clone(summarySpecs)
		for i := range specs {
			if specs[i].name == c.col {
				specs[i].kind = c.kind
			}
		}
		w, err := newTableWriter(p, specs, nil)
		if err != nil {
			t.Fatal(err)
		}
		for i, s := range specs {
			switch s.kind {
			case kString:
				w.str(i, "x")
			case kInt:
				w.int(i, 1)
			case kFloat:
				w.float(i, 1)
			}
		}
		w.endRow()
		if err := w.close(); err != nil {
			t.Fatal(err)
		}
		_, err = ReadSummaryParquet(p)
		if err == nil || !strings.Contains(err.Error(), p+": "+c.want) {
			t.Errorf("%s as another type: %v, want %q naming the file", c.col, err, c.want)
		}
	}
}

// writeDir writes d as the folder d.Dir: manifest.json, summary.parquet and
// runs.parquet, and curves.parquet with one step per applicable row.
func writeDir(t *testing.T, d *ResultDir) {
	t.Helper()
	if err := os.MkdirAll(d.Dir, 0o755); err != nil {
		t.Fatal(err)
	}
	if err := WriteManifest(filepath.Join(d.Dir, "manifest.json"), d.Manifest); err != nil {
		t.Fatal(err)
	}
	if err := WriteSummaryParquet(filepath.Join(d.Dir, "summary.parquet"), d.Summary); err != nil {
		t.Fatal(err)
	}
	rw, err := NewRunsWriter(filepath.Join(d.Dir, "runs.parquet"))
	if err != nil {
		t.Fatal(err)
	}
	for _, r := range d.Runs {
		rw.Write(r)
	}
	if err := rw.Close(); err != nil {
		t.Fatal(err)
	}
	cw, err := NewCurvesWriter(filepath.Join(d.Dir, "curves.parquet"))
	if err != nil {
		t.Fatal(err)
	}
	for _, s := range d.Summary {
		if s.Applicable {
			cw.Write(CurveRow{Problem: s.Problem, Filter: s.Filter, Config: s.Config, CurvePoint: metrics.CurvePoint{
				Step: 1, RMSE: s.RMSE, PredRMSE: s.PredRMSE, ANEES: s.ANEES, ANEESLo: s.ANEESLo, ANEESHi: s.ANEESHi, ANIS: nan, Runs: s.Runs}})
		}
	}
	if err := cw.Close(); err != nil {
		t.Fatal(err)
	}
}

// asFirstVersion rewrites the Parquet files of dir with the columns of the
// first version.
func asFirstVersion(t *testing.T, dir string) {
	t.Helper()
	v := olderColumns[0]
	rewriteAs(t, filepath.Join(dir, "summary.parquet"), summarySpecs, v.summary)
	rewriteAs(t, filepath.Join(dir, "runs.parquet"), runSpecs, v.runs)
	rewriteAs(t, filepath.Join(dir, "curves.parquet"), curveSpecs, v.curves)
}

// withLaterColumns fills the columns an earlier version lacks: pred_rmse,
// evals_per_step and repairs in the summary, pred_rmse and repairs in the
// runs. The compare verdict does not depend on them.
func withLaterColumns(d *ResultDir) *ResultDir {
	for i := range d.Summary {
		if s := &d.Summary[i]; s.Applicable {
			s.PredRMSE, s.EvalsPerStep, s.Repairs = 1.5*s.RMSE, 4, 2
		}
	}
	for i := range d.Runs {
		d.Runs[i].PredRMSE, d.Runs[i].Repairs = 1.5*d.Runs[i].RMSE, 1
	}
	return d
}

// A base folder of the first version against a new one of today: the
// columns the base lacks are NaN, nothing is judged on them, and the
// verdicts are those of two folders of today (same when the runs are
// equal, worse when the RMSE rose by 10%, which the paired interval
// finds).
func TestCompareOlderBase(t *testing.T) {
	const n = 30
	rmse := spread(n, 2, 0.1, 21)
	anees := spread(n, 4, 0.2, 22)
	noise := spread(n, 0, 0.002, 23)
	up := make([]float64, n)
	for i := range up {
		up[i] = rmse[i] * (1.1 + noise[i])
	}
	rows := func(worse bool) []fakeRow {
		r := []fakeRow{
			{problem: "cv2d", filter: "ukf", rmse: rmse, anees: anees, lo: 3.5, hi: 4.5, ns: 1000},
			{problem: "cv2d", filter: "pf", config: "particles=500", rmse: rmse, anees: anees, lo: 3.5, hi: 4.5, ns: 90000},
			{problem: "ungm", filter: "kf", na: "kf needs a linear model; ungm is nonlinear"},
		}
		if worse {
			r[1].rmse = up
		}
		return r
	}
	tmp := t.TempDir()
	base := fakeDir(filepath.Join(tmp, "base"), 1, rows(false)...)
	writeDir(t, base)
	asFirstVersion(t, base.Dir)
	for _, c := range []struct {
		name  string
		worse bool
		want  []string
	}{
		{"nothing changed", false, []string{VerdictSame, VerdictSame, VerdictSame}},
		{"pf rmse 10% up", true, []string{VerdictSame, VerdictWorse, VerdictSame}},
	} {
		cur := withLaterColumns(fakeDir(filepath.Join(tmp, c.name), 1, rows(c.worse)...))
		writeDir(t, cur)
		b, err := ReadResultDir(base.Dir)
		if err != nil {
			t.Fatalf("%s: %v", c.name, err)
		}
		nw, err := ReadResultDir(cur.Dir)
		if err != nil {
			t.Fatal(err)
		}
		for _, s := range b.Summary {
			if s.Applicable && (!math.IsNaN(s.PredRMSE) || !math.IsNaN(s.EvalsPerStep) || s.Repairs != 0 || math.IsNaN(s.RMSE)) {
				t.Errorf("%s: base row %s %s: pred_rmse %v evals %v repairs %d rmse %v; want NaN NaN 0 and a value",
					c.name, s.Problem, s.Filter, s.PredRMSE, s.EvalsPerStep, s.Repairs, s.RMSE)
			}
		}
		for _, r := range b.Runs {
			if !math.IsNaN(r.PredRMSE) || r.Repairs != 0 {
				t.Fatalf("%s: base run %d: pred_rmse %v repairs %d, want NaN and 0", c.name, r.Run, r.PredRMSE, r.Repairs)
			}
		}
		cmp, err := Compare(b, nw, CompareOptions{})
		if err != nil {
			t.Fatalf("%s: %v", c.name, err)
		}
		var got []string
		for _, r := range cmp.Rows {
			got = append(got, r.Verdict)
		}
		if !slices.Equal(got, c.want) {
			t.Errorf("%s: verdicts %q, want %q (%+v)", c.name, got, c.want, cmp.Rows)
		}
		// The other way round (a folder of today as the base) gives the
		// mirror verdicts.
		if !c.worse {
			cmp, err := Compare(nw, b, CompareOptions{})
			if err != nil {
				t.Fatal(err)
			}
			if k := cmp.Count(VerdictSame); k != 3 {
				t.Errorf("today's folder against the older one: %d rows same, want 3 (%s)", k, cmp.Headline())
			}
		}
	}
}

// report and budget read a folder of the first version: the report table
// leaves out the columns the folder lacks and shows the rest as today's
// folder does, the budget's choice by time is the same, and a budget in
// model evaluations finds no candidate there and says why.
func TestReportAndBudgetOlderFolder(t *testing.T) {
	tmp := t.TempDir()
	mk := func(dir string) *ResultDir {
		n := 20
		d := fakeDir(filepath.Join(tmp, dir), 1,
			fakeRow{problem: "cv2d", filter: "ekf", rmse: spread(n, 2, 0.1, 1), anees: spread(n, 4, 0.2, 2), lo: 3.5, hi: 4.5, ns: 900},
			fakeRow{problem: "cv2d", filter: "pf", config: "particles=500", rmse: spread(n, 1.5, 0.1, 3), anees: spread(n, 4, 0.2, 4), lo: 3.5, hi: 4.5, ns: 90000},
		)
		for i := range d.Summary {
			s := &d.Summary[i]
			s.RMSELo, s.RMSEHi, s.NEESInBounds = 0.95*s.RMSE, 1.05*s.RMSE, 0.93
			s.ANIS, s.ANISLo, s.ANISHi = 2, 1.8, 2.2
			s.PredRMSE, s.EvalsPerStep, s.MeanESS = 3.25, 4, nan
		}
		d.Summary[1].EvalsPerStep, d.Summary[1].MeanESS = 1000, 412
		return d
	}
	old, now := mk("old"), mk("now")
	writeDir(t, old)
	asFirstVersion(t, old.Dir)
	writeDir(t, now)

	ro, err := ReadReportData(old.Dir)
	if err != nil {
		t.Fatal(err)
	}
	rn, err := ReadReportData(now.Dir)
	if err != nil {
		t.Fatal(err)
	}
	for i, c := range ro.Curves {
		if !math.IsNaN(c.PredRMSE) || !sameFloat(c.RMSE, rn.Curves[i].RMSE) || math.IsNaN(rn.Curves[i].PredRMSE) {
			t.Errorf("curve %d: pred_rmse %v rmse %v, want NaN and %v", i, c.PredRMSE, c.RMSE, rn.Curves[i].RMSE)
		}
	}
	var to, tn strings.Builder
	if err := WriteReportTable(&to, "markdown", ro); err != nil {
		t.Fatal(err)
	}
	if err := WriteReportTable(&tn, "markdown", rn); err != nil {
		t.Fatal(err)
	}
	for _, head := range []string{"pred RMSE", "evals/step", "mean ESS"} {
		if strings.Contains(to.String(), head) || !strings.Contains(tn.String(), head) {
			t.Errorf("column %q: want it in today's table only\nolder:\n%s\ntoday:\n%s", head, to.String(), tn.String())
		}
	}
	for _, cell := range []string{"| 2.00 [1.90, 2.10] |", "| 1.50 [1.43, 1.58] |", "| 4.00 [3.50, 4.50] in |", "| 90000 |"} {
		if !strings.Contains(to.String(), cell) || !strings.Contains(tn.String(), cell) {
			t.Errorf("cell %q: want it in both tables\nolder:\n%s\ntoday:\n%s", cell, to.String(), tn.String())
		}
	}

	for _, rows := range [][]SummaryRow{ro.Rows, rn.Rows} {
		bt := Budget(rows, BudgetOptions{Cost: CostTime, Max: 1e5})
		if len(bt) != 1 || bt[0].Best < 0 || bt[0].Front[bt[0].Best].Filter != "pf" {
			t.Errorf("time budget: %+v, want the pf", bt)
		}
	}
	if be := Budget(rn.Rows, BudgetOptions{Cost: CostEvals, Max: 1e5}); !Fits(be) || be[0].Front[be[0].Best].Filter != "pf" {
		t.Errorf("evals budget on today's folder: %+v, want the pf", be)
	}
	be := Budget(ro.Rows, BudgetOptions{Cost: CostEvals, Max: 1e5})
	if len(be) != 1 || len(be[0].Front) != 0 || len(be[0].Excluded) != 2 ||
		!strings.Contains(be[0].Excluded[0].Reason, "no evals_per_step") || Fits(be) {
		t.Errorf("evals budget on the older folder: %+v, want every row left out for want of evals_per_step", be)
	}
}
