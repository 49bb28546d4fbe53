package main

import (
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/parquet"
	"github.com/apache/arrow-go/v18/parquet/file"
	"github.com/apache/arrow-go/v18/parquet/schema"
)

// dropColumns rewrites the Parquet file at path without the columns drop,
// as a file of an earlier estbench was written: the other columns in their
// order, with their names, types, repetitions and values, in one row
// group. It copies through arrow-go's low-level reader and writer, not
// through estbench's, and checks the columns of the result.
func dropColumns(t *testing.T, path string, drop ...string) {
	t.Helper()
	fr, err := file.OpenParquetFile(path, false)
	if err != nil {
		t.Fatal(err)
	}
	sc := fr.MetaData().Schema
	type column struct {
		strs  []parquet.ByteArray
		ints  []int64
		bools []bool
		flts  []float64
		defs  []int16 // nil for a required column
	}
	var (
		fields schema.FieldList
		keep   []int
		cols   []column
		names  []string
	)
	for i := range sc.NumColumns() {
		c := sc.Column(i)
		if slices.Contains(drop, c.Name()) {
			continue
		}
		n, err := schema.NewPrimitiveNodeLogical(c.Name(), c.SchemaNode().RepetitionType(), c.LogicalType(), c.PhysicalType(), -1, -1)
		if err != nil {
			t.Fatal(err)
		}
		fields, keep, names = append(fields, n), append(keep, i), append(names, c.Name())
	}
	cols = make([]column, len(keep))
	for g := range fr.NumRowGroups() {
		rg := fr.RowGroup(g)
		n := rg.NumRows()
		for j, i := range keep {
			cr, err := rg.Column(i)
			if err != nil {
				t.Fatal(err)
			}
			var defs []int16
			if sc.Column(i).MaxDefinitionLevel() > 0 {
				defs = make([]int16, n)
			}
			c := &cols[j]
			var got int64
			switch r := cr.(type) {
			case *file.ByteArrayColumnChunkReader:
				v := make([]parquet.ByteArray, n)
				got, _, err = r.ReadBatch(n, v, defs, nil)
				for _, b := range v[:got] { // the reader reuses its buffers
					c.strs = append(c.strs, slices.Clone(b))
				}
			case *file.Int64ColumnChunkReader:
				v := make([]int64, n)
				got, _, err = r.ReadBatch(n, v, defs, nil)
				c.ints = append(c.ints, v[:got]...)
			case *file.BooleanColumnChunkReader:
				v := make([]bool, n)
				got, _, err = r.ReadBatch(n, v, defs, nil)
				c.bools = append(c.bools, v[:got]...)
			case *file.Float64ColumnChunkReader:
				v := make([]float64, n)
				var nv int
				got, nv, err = r.ReadBatch(n, v, defs, nil)
				c.flts = append(c.flts, v[:nv]...)
			default:
				t.Fatalf("%s: column %s: unexpected reader %T", path, sc.Column(i).Name(), cr)
			}
			if err != nil || got != n {
				t.Fatalf("%s: column %s: read %d of %d rows: %v", path, sc.Column(i).Name(), got, n, err)
			}
			if defs != nil {
				c.defs = append(c.defs, defs...)
			}
		}
	}
	fr.Close()

	root, err := schema.NewGroupNode("schema", parquet.Repetitions.Required, fields, -1)
	if err != nil {
		t.Fatal(err)
	}
	tmp := path + ".old"
	f, err := os.Create(tmp)
	if err != nil {
		t.Fatal(err)
	}
	pw := file.NewParquetWriter(f, root)
	rg := pw.AppendRowGroup()
	for j := range cols {
		cw, err := rg.NextColumn()
		if err != nil {
			t.Fatal(err)
		}
		c := &cols[j]
		switch w := cw.(type) {
		case *file.ByteArrayColumnChunkWriter:
			_, err = w.WriteBatch(c.strs, c.defs, nil)
		case *file.Int64ColumnChunkWriter:
			_, err = w.WriteBatch(c.ints, c.defs, nil)
		case *file.BooleanColumnChunkWriter:
			_, err = w.WriteBatch(c.bools, c.defs, nil)
		case *file.Float64ColumnChunkWriter:
			_, err = w.WriteBatch(c.flts, c.defs, nil)
		}
		if err == nil {
			err = cw.Close()
		}
		if err != nil {
			t.Fatal(err)
		}
	}
	if err := rg.Close(); err != nil {
		t.Fatal(err)
	}
	if err := pw.Close(); err != nil { // closes f too
		t.Fatal(err)
	}
	if err := os.Rename(tmp, path); err != nil {
		t.Fatal(err)
	}

	fr, err = file.OpenParquetFile(path, false)
	if err != nil {
		t.Fatal(err)
	}
	defer fr.Close()
	var got []string
	for _, c := range fr.MetaData().Schema.Columns() {
		got = append(got, c.Name())
	}
	if !slices.Equal(got, names) {
		t.Fatalf("%s: rewritten with columns %q, want %q", path, got, names)
	}
}

// The nightly gate with a baseline made by an earlier build: the folder
// has the Parquet files of the first version (results/rows.go at
// ba0a25d), without pred_rmse, evals_per_step, mean_ess and repairs in the
// summary, pred_rmse and repairs in the runs, pred_rmse in the curves.
// Tonight's run of the same suite and seed has them. compare reads both,
// finds every row the same (the runs are bit-identical but for timings,
// and the missing columns are not judged) and exits 0, in either
// direction; report and a budget by time read the older folder; a budget
// in model evaluations finds none there and exits 1 saying so. A required
// column missing is still bad input (exit 2) naming the file and column.
func TestCompareOlderBaseline(t *testing.T) {
	tmp := t.TempDir()
	suite := writeSuite(t, tinySuite)
	base, tonight := filepath.Join(tmp, "last-night"), filepath.Join(tmp, "tonight")
	for _, d := range []string{base, tonight} {
		if code, _, e := runCLI(t, "run", "--suite", suite, "--out", d, "--format", "csv"); code != exitOK {
			t.Fatalf("run: exit %d: %s", code, e)
		}
	}
	dropColumns(t, filepath.Join(base, "summary.parquet"), "pred_rmse", "evals_per_step", "mean_ess", "repairs")
	dropColumns(t, filepath.Join(base, "runs.parquet"), "pred_rmse", "repairs")
	dropColumns(t, filepath.Join(base, "curves.parquet"), "pred_rmse")

	for _, c := range [][2]string{{base, tonight}, {tonight, base}} {
		code, rows, errOut := compareJSON(t, c[0], c[1])
		if code != exitOK || len(rows) != 6 {
			t.Fatalf("compare %s %s: exit %d, %d rows: %s", filepath.Base(c[0]), filepath.Base(c[1]), code, len(rows), errOut)
		}
		ran := 0
		for _, r := range rows {
			if r["verdict"] != "same" {
				t.Errorf("%v %v %v: %v (%v), want same", r["problem"], r["filter"], r["config"], r["verdict"], r["why"])
			}
			if r["base_runs"].(float64) > 0 {
				ran++
				if r["base_rmse"] == nil || r["base_rmse"] != r["new_rmse"] || r["rmse_change"] != 0.0 {
					t.Errorf("%v %v: rmse %v → %v, change %v; want equal values read from both folders",
						r["problem"], r["filter"], r["base_rmse"], r["new_rmse"], r["rmse_change"])
				}
			}
		}
		if ran != 5 { // kf does not apply on ungm
			t.Errorf("%d rows ran, want 5", ran)
		}
	}
	if code, out, e := runCLI(t, "compare", base, tonight, "--format", "markdown"); code != exitOK || !strings.Contains(out, "0 worse, 0 better, 6 same") {
		t.Errorf("compare markdown: exit %d: %s%s", code, out, e)
	}

	code, out, e := runCLI(t, "report", base, "--format", "markdown")
	if code != exitOK || strings.Contains(out, "pred RMSE") || !strings.Contains(out, "particles=200") {
		t.Errorf("report markdown of the older folder: exit %d, want no pred RMSE column: %s%s", code, out, e)
	}
	if code, _, e := runCLI(t, "report", base); code != exitOK {
		t.Errorf("report html of the older folder: exit %d: %s", code, e)
	}
	if code, _, e := runCLI(t, "budget", base, "--max-ns-per-step", "1e12"); code != exitOK {
		t.Errorf("budget by time of the older folder: exit %d: %s", code, e)
	}
	if code, _, e := runCLI(t, "budget", tonight, "--max-evals-per-step", "1e9"); code != exitOK {
		t.Errorf("budget by evaluations of tonight's folder: exit %d: %s", code, e)
	}
	code, out, e = runCLI(t, "budget", base, "--max-evals-per-step", "1e9")
	if code != exitFailed || !strings.Contains(out, "no evals_per_step") {
		t.Errorf("budget by evaluations of the older folder: exit %d, want %d and a note of no evals_per_step: %s%s", code, exitFailed, out, e)
	}

	runs := filepath.Join(base, "runs.parquet")
	dropColumns(t, runs, "rmse")
	code, _, e = runCLI(t, "compare", base, tonight)
	if code != exitUsage || !strings.Contains(e, runs+": no column rmse") {
		t.Errorf("runs without rmse: exit %d, %q; want %d naming %s and the column", code, e, exitUsage, runs)
	}
}
