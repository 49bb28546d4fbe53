package results

import (
	"fmt"
	"io"
	"math"
	"slices"
	"strconv"
	"strings"

	"github.com/apache/arrow-go/v18/parquet"
	"github.com/apache/arrow-go/v18/parquet/compress"
	"github.com/apache/arrow-go/v18/parquet/file"
	"github.com/apache/arrow-go/v18/parquet/schema"

	"github.com/estbench/estbench/metrics"
)

// Parquet layout: strings are required UTF-8 BYTE_ARRAY columns, counts and
// indices required INT64, flags required BOOLEAN, metrics optional DOUBLE
// with NaN stored as null. Pages are Snappy-compressed.

const (
	batchRows    = 4096    // rows buffered before they are written to the row group
	rowGroupRows = 1 << 16 // rows per row group
)

type colKind uint8

const (
	kString colKind = iota
	kInt
	kBool
	kFloat
)

type colSpec struct {
	name string
	kind colKind
	// later marks a column added after the file's first version: a reader
	// takes a file without it as one whose values are all null.
	later bool
}

// The columns added to each file since its first version, by the change
// that added them (git log -p results/rows.go): mean_ess and repairs to
// the summary and repairs to the runs with the count of covariance
// repairs; evals_per_step to the summary with estbench compare and budget;
// pred_rmse to all three with the one-step-ahead prediction error;
// anees_run_median to the summary with the median over runs of each run's
// ANEES. Files of earlier versions lack them, and the readers accept that.
var (
	summaryLater = []string{"mean_ess", "repairs", "evals_per_step", "pred_rmse", "anees_run_median"}
	runLater     = []string{"repairs", "pred_rmse"}
	curveLater   = []string{"pred_rmse"}
)

var summarySpecs = specsOf(SummaryColumns, map[string]colKind{
	"problem": kString, "filter": kString, "config": kString, "note": kString,
	"runs": kInt, "diverged": kInt,
}, summaryLater)

var runSpecs = specsOf(RunColumns, map[string]colKind{
	"problem": kString, "filter": kString, "config": kString, "reason": kString,
	"run": kInt, "div_step": kInt, "diverged": kBool, "repairs": kInt,
}, runLater)

var curveSpecs = specsOf(CurveColumns, map[string]colKind{
	"problem": kString, "filter": kString, "config": kString,
	"step": kInt, "runs": kInt,
}, curveLater)

// specsOf gives each column its kind (columns not in kinds are float) and
// marks those in later.
func specsOf(names []string, kinds map[string]colKind, later []string) []colSpec {
	s := make([]colSpec, len(names))
	for i, n := range names {
		k, ok := kinds[n]
		if !ok {
			k = kFloat
		}
		s[i] = colSpec{name: n, kind: k, later: slices.Contains(later, n)}
	}
	return s
}

func parquetSchema(specs []colSpec) (*schema.GroupNode, error) {
	fields := make(schema.FieldList, len(specs))
	for i, c := range specs {
		var (
			n   schema.Node
			err error
		)
		switch c.kind {
		case kString:
			n, err = schema.NewPrimitiveNodeLogical(c.name, parquet.Repetitions.Required,
				schema.StringLogicalType{}, parquet.Types.ByteArray, -1, -1)
		case kInt:
			n, err = schema.NewPrimitiveNode(c.name, parquet.Repetitions.Required, parquet.Types.Int64, -1, -1)
		case kBool:
			n, err = schema.NewPrimitiveNode(c.name, parquet.Repetitions.Required, parquet.Types.Boolean, -1, -1)
		case kFloat:
			n, err = schema.NewPrimitiveNode(c.name, parquet.Repetitions.Optional, parquet.Types.Double, -1, -1)
		}
		if err != nil {
			return nil, err
		}
		fields[i] = n
	}
	return schema.NewGroupNode("schema", parquet.Repetitions.Required, fields, -1)
}

// colBuf is one column's buffer for the current batch. It is sized once
// and reset after each flush, so it never holds more than batchRows rows.
type colBuf struct {
	kind  colKind
	bytes []byte              // string: the batch's values, concatenated
	ends  []int               // string: end offset in bytes of each value
	views []parquet.ByteArray // string: views into bytes, made at flush
	ints  []int64
	bools []bool
	flts  []float64 // float: the non-null values, packed
	defs  []int16   // float: 1 present, 0 null, one per row
}

// tableWriter streams rows into a Parquet file that becomes path on close.
type tableWriter struct {
	path   string
	af     *atomicFile
	pw     *file.Writer
	cols   []colBuf
	rg     file.BufferedRowGroupWriter // open row group; nil between groups
	rgRows int                         // rows written to rg
	n      int                         // rows in the batch
	err    error                       // first error; the writer is dead after it
	closed bool
}

// newTableWriter opens the temporary file. wrap, if not nil, wraps the
// file's writer (tests use it to inject failures).
func newTableWriter(path string, specs []colSpec, wrap func(io.Writer) io.Writer) (*tableWriter, error) {
	sc, err := parquetSchema(specs)
	if err != nil {
		return nil, fmt.Errorf("results: %s: schema: %w", path, err)
	}
	af, err := createAtomic(path)
	if err != nil {
		return nil, err
	}
	var sink io.Writer = af.w // a *bufio.Writer: the Parquet writer cannot close the file
	if wrap != nil {
		sink = wrap(sink)
	}
	props := parquet.NewWriterProperties(parquet.WithCompression(compress.Codecs.Snappy))
	pw, err := file.NewParquetWriterWithError(sink, sc, file.WithWriterProps(props))
	if err != nil {
		af.abort()
		return nil, fmt.Errorf("results: writing %s: %w", path, err)
	}
	t := &tableWriter{path: path, af: af, pw: pw, cols: make([]colBuf, len(specs))}
	for i, s := range specs {
		c := &t.cols[i]
		c.kind = s.kind
		switch s.kind {
		case kString:
			c.bytes = make([]byte, 0, 16*batchRows)
			c.ends = make([]int, 0, batchRows)
			c.views = make([]parquet.ByteArray, 0, batchRows)
		case kInt:
			c.ints = make([]int64, 0, batchRows)
		case kBool:
			c.bools = make([]bool, 0, batchRows)
		case kFloat:
			c.flts = make([]float64, 0, batchRows)
			c.defs = make([]int16, 0, batchRows)
		}
	}
	return t, nil
}

func (t *tableWriter) str(i int, s string) {
	c := &t.cols[i]
	c.bytes = append(c.bytes, s...)
	c.ends = append(c.ends, len(c.bytes))
}

func (t *tableWriter) int(i int, v int) { t.cols[i].ints = append(t.cols[i].ints, int64(v)) }

func (t *tableWriter) bool(i int, v bool) { t.cols[i].bools = append(t.cols[i].bools, v) }

// float stores v, or null when v is NaN.
func (t *tableWriter) float(i int, v float64) {
	c := &t.cols[i]
	if math.IsNaN(v) {
		c.defs = append(c.defs, 0)
		return
	}
	c.flts = append(c.flts, v)
	c.defs = append(c.defs, 1)
}

// endRow completes a row whose every column was set, in any order.
func (t *tableWriter) endRow() error {
	t.n++
	if t.n == batchRows {
		return t.flush()
	}
	return nil
}

// live returns the error that stops the writer, if any.
func (t *tableWriter) live() error {
	if t.closed {
		return fmt.Errorf("results: %s: write after close", t.path)
	}
	return t.err
}

// flush writes the batch into the open row group and closes the group when
// it is full.
func (t *tableWriter) flush() error {
	if t.err != nil || t.n == 0 {
		return t.err
	}
	if t.rg == nil {
		t.rg, t.err = t.pw.AppendBufferedRowGroupChecked()
		if t.err != nil {
			return t.fail(t.err)
		}
	}
	for i := range t.cols {
		cw, err := t.rg.Column(i)
		if err != nil {
			return t.fail(err)
		}
		if err := t.cols[i].writeTo(cw); err != nil {
			return t.fail(fmt.Errorf("column %d: %w", i, err))
		}
	}
	t.rgRows += t.n
	t.n = 0
	if t.rgRows >= rowGroupRows {
		return t.closeGroup()
	}
	return nil
}

func (t *tableWriter) closeGroup() error {
	if t.rg == nil {
		return nil
	}
	err := t.rg.Close()
	t.rg, t.rgRows = nil, 0
	if err != nil {
		return t.fail(err)
	}
	return nil
}

func (t *tableWriter) fail(err error) error {
	if t.err == nil {
		t.err = fmt.Errorf("results: writing %s: %w", t.path, err)
	}
	return t.err
}

// writeTo hands the batch to its column writer and resets the buffer.
func (c *colBuf) writeTo(cw file.ColumnChunkWriter) error {
	var err error
	switch c.kind {
	case kString:
		start := 0
		for _, e := range c.ends {
			c.views = append(c.views, parquet.ByteArray(c.bytes[start:e]))
			start = e
		}
		_, err = cw.(*file.ByteArrayColumnChunkWriter).WriteBatch(c.views, nil, nil)
		c.bytes, c.ends, c.views = c.bytes[:0], c.ends[:0], c.views[:0]
	case kInt:
		_, err = cw.(*file.Int64ColumnChunkWriter).WriteBatch(c.ints, nil, nil)
		c.ints = c.ints[:0]
	case kBool:
		_, err = cw.(*file.BooleanColumnChunkWriter).WriteBatch(c.bools, nil, nil)
		c.bools = c.bools[:0]
	case kFloat:
		_, err = cw.(*file.Float64ColumnChunkWriter).WriteBatch(c.flts, c.defs, nil)
		c.flts, c.defs = c.flts[:0], c.defs[:0]
	}
	return err
}

// close writes what is buffered and the footer and renames the file into
// place; on any error it removes the temporary file instead.
func (t *tableWriter) close() error {
	if t.closed {
		return fmt.Errorf("results: %s: already closed", t.path)
	}
	if t.err == nil {
		t.flush()
	}
	if t.err == nil {
		t.closeGroup()
	}
	t.closed = true
	if t.err != nil {
		t.pw.Close() // release the writer; the file is discarded
		t.af.abort()
		return t.err
	}
	if err := t.pw.Close(); err != nil {
		t.af.abort()
		t.err = fmt.Errorf("results: writing %s: %w", t.path, err)
		return t.err
	}
	return t.af.commit()
}

// abort discards the file; the target path is left as it was.
func (t *tableWriter) abort() {
	if t.closed {
		return
	}
	t.closed = true
	t.af.abort()
}

// RunsWriter streams the rows of runs.parquet. Write copies a row into
// fixed-size column buffers and keeps nothing of it.
type RunsWriter struct{ t *tableWriter }

// NewRunsWriter starts runs.parquet (or any path): a temporary file in the
// same directory that Close renames to path.
func NewRunsWriter(path string) (*RunsWriter, error) {
	t, err := newTableWriter(path, runSpecs, nil)
	if err != nil {
		return nil, err
	}
	return &RunsWriter{t}, nil
}

// Write adds one run.
func (w *RunsWriter) Write(r RunRow) error {
	t := w.t
	if err := t.live(); err != nil {
		return err
	}
	t.str(0, r.Problem)
	t.str(1, r.Filter)
	t.str(2, r.Config)
	t.int(3, r.Run)
	t.bool(4, r.Diverged)
	t.int(5, r.DivStep)
	t.str(6, r.Reason)
	t.float(7, r.RMSE)
	t.float(8, r.PredRMSE)
	t.float(9, r.ANEES)
	t.float(10, r.ANIS)
	t.float(11, r.NsPerStep)
	t.float(12, r.MeanESS)
	t.int(13, r.Repairs)
	return t.endRow()
}

// Close finishes the file and renames it into place. After an error in
// Write, Close removes the temporary file and returns that error.
func (w *RunsWriter) Close() error { return w.t.close() }

// Abort removes the temporary file; path is left as it was. It does nothing
// after Close.
func (w *RunsWriter) Abort() { w.t.abort() }

// CurvesWriter streams the rows of curves.parquet, as RunsWriter does.
type CurvesWriter struct{ t *tableWriter }

// NewCurvesWriter starts curves.parquet (or any path).
func NewCurvesWriter(path string) (*CurvesWriter, error) {
	t, err := newTableWriter(path, curveSpecs, nil)
	if err != nil {
		return nil, err
	}
	return &CurvesWriter{t}, nil
}

// Write adds one step of one pair.
func (w *CurvesWriter) Write(r CurveRow) error {
	t := w.t
	if err := t.live(); err != nil {
		return err
	}
	t.str(0, r.Problem)
	t.str(1, r.Filter)
	t.str(2, r.Config)
	t.int(3, r.Step)
	t.float(4, r.RMSE)
	t.float(5, r.PredRMSE)
	t.float(6, r.ANEES)
	t.float(7, r.ANEESLo)
	t.float(8, r.ANEESHi)
	t.float(9, r.ANIS)
	t.int(10, r.Runs)
	return t.endRow()
}

// Close finishes the file and renames it into place.
func (w *CurvesWriter) Close() error { return w.t.close() }

// Abort removes the temporary file.
func (w *CurvesWriter) Abort() { w.t.abort() }

// WriteSummaryParquet writes summary.parquet (or any path) atomically, with
// the columns of SummaryColumns: the values of the csv and json formats,
// nulls where those have empty cells or null.
func WriteSummaryParquet(path string, rows []SummaryRow) error {
	return writeSummaryParquet(path, rows, nil)
}

func writeSummaryParquet(path string, rows []SummaryRow, wrap func(io.Writer) io.Writer) error {
	t, err := newTableWriter(path, summarySpecs, wrap)
	if err != nil {
		return err
	}
	for i := range rows {
		r := &rows[i]
		runs, div := summaryCounts(r)
		t.str(0, r.Problem)
		t.str(1, r.Filter)
		t.str(2, r.Config)
		t.int(3, runs)
		t.int(4, div)
		for j, v := range summaryValues(r) {
			t.float(5+j, v)
		}
		t.str(len(summarySpecs)-1, noteOf(r))
		if err := t.endRow(); err != nil {
			break
		}
	}
	return t.close()
}

// table is a whole Parquet file read into columns, for the readers.
type table struct {
	rows  int
	strs  [][]string  // by column index; nil for other kinds
	ints  [][]int64   //
	bools [][]bool    //
	flts  [][]float64 // nulls as NaN
}

// readTable reads the columns specs of a file, found by name. A column of
// specs that the file lacks is an error unless it is marked later; then it
// reads as all null (NaN; 0 for an integer column). A column of the file
// that specs does not name is ignored: a file of a newer estbench, with a
// column added since, reads as it would without it. A column of the wrong
// type, or named twice, is an error naming the file and the column.
func readTable(path string, specs []colSpec) (*table, error) {
	fr, err := file.OpenParquetFile(path, false)
	if err != nil {
		return nil, fmt.Errorf("results: reading %s: %w", path, err)
	}
	defer fr.Close()
	sc := fr.MetaData().Schema
	at := make(map[string]int, sc.NumColumns()) // index of each column of the file, by name
	for j := range sc.NumColumns() {
		p := sc.Column(j).Path()
		if _, dup := at[p]; dup {
			return nil, fmt.Errorf("results: %s: column %s appears twice", path, p)
		}
		at[p] = j
	}
	idx := make([]int, len(specs)) // file column of each spec; -1 when absent
	for i, s := range specs {
		j, ok := at[s.name]
		switch {
		case !ok && s.later:
			idx[i] = -1
			continue
		case !ok:
			return nil, fmt.Errorf("results: %s: no column %s (want %s; of these, %s may be absent in files of earlier versions)",
				path, s.name, specNames(specs), laterNames(specs))
		}
		c := sc.Column(j)
		gotRep, wantRep := c.SchemaNode().RepetitionType(), parquet.Repetitions.Required
		if s.kind == kFloat {
			wantRep = parquet.Repetitions.Optional
		}
		if c.PhysicalType() != colTypes[s.kind] || gotRep != wantRep {
			return nil, fmt.Errorf("results: %s: column %s is %s %s, want %s %s",
				path, s.name, gotRep, c.PhysicalType(), wantRep, colTypes[s.kind])
		}
		idx[i] = j
	}
	t := &table{
		strs: make([][]string, len(specs)), ints: make([][]int64, len(specs)),
		bools: make([][]bool, len(specs)), flts: make([][]float64, len(specs)),
	}
	for g := 0; g < fr.NumRowGroups(); g++ {
		rg := fr.RowGroup(g)
		n := int(rg.NumRows())
		for i, s := range specs {
			if idx[i] < 0 {
				t.readAbsent(i, s.kind, n)
				continue
			}
			cr, err := rg.Column(idx[i])
			if err != nil {
				return nil, fmt.Errorf("results: %s: row group %d column %s: %w", path, g, s.name, err)
			}
			if err := t.readColumn(i, s.kind, cr, n); err != nil {
				return nil, fmt.Errorf("results: %s: row group %d column %s: %w", path, g, s.name, err)
			}
		}
		t.rows += n
	}
	return t, nil
}

// colTypes are the physical types of the kinds.
var colTypes = [...]parquet.Type{kString: parquet.Types.ByteArray, kInt: parquet.Types.Int64,
	kBool: parquet.Types.Boolean, kFloat: parquet.Types.Double}

// readAbsent fills n rows of a column the file does not have: NaN for a
// float, 0 for an integer (only later columns are absent, and none of them
// is a string or a flag).
func (t *table) readAbsent(i int, kind colKind, n int) {
	switch kind {
	case kFloat:
		for range n {
			t.flts[i] = append(t.flts[i], math.NaN())
		}
	case kInt:
		t.ints[i] = append(t.ints[i], make([]int64, n)...)
	default:
		panic("results: absent column of kind " + strconv.Itoa(int(kind)))
	}
}

func (t *table) readColumn(i int, kind colKind, cr file.ColumnChunkReader, n int) error {
	defs := make([]int16, n)
	var total int64
	var err error
	switch kind {
	case kString:
		vals := make([]parquet.ByteArray, n)
		total, _, err = cr.(*file.ByteArrayColumnChunkReader).ReadBatch(int64(n), vals, nil, nil)
		for _, v := range vals[:total] {
			t.strs[i] = append(t.strs[i], string(v))
		}
	case kInt:
		vals := make([]int64, n)
		total, _, err = cr.(*file.Int64ColumnChunkReader).ReadBatch(int64(n), vals, nil, nil)
		t.ints[i] = append(t.ints[i], vals[:total]...)
	case kBool:
		vals := make([]bool, n)
		total, _, err = cr.(*file.BooleanColumnChunkReader).ReadBatch(int64(n), vals, nil, nil)
		t.bools[i] = append(t.bools[i], vals[:total]...)
	case kFloat:
		vals := make([]float64, n)
		var nv int
		total, nv, err = cr.(*file.Float64ColumnChunkReader).ReadBatch(int64(n), vals, defs, nil)
		k := 0
		for _, d := range defs[:total] {
			v := math.NaN()
			if d == 1 {
				v = vals[k]
				k++
			}
			t.flts[i] = append(t.flts[i], v)
		}
		if err == nil && k != nv {
			err = fmt.Errorf("%d values for %d definition levels", nv, k)
		}
	}
	if err == nil && int(total) != n {
		err = fmt.Errorf("read %d of %d rows", total, n)
	}
	return err
}

func specNames(specs []colSpec) string {
	n := make([]string, len(specs))
	for i, s := range specs {
		n[i] = s.name
	}
	return strings.Join(n, ", ")
}

func laterNames(specs []colSpec) string {
	var n []string
	for _, s := range specs {
		if s.later {
			n = append(n, s.name)
		}
	}
	return strings.Join(n, ", ")
}

// ReadSummaryParquet reads a file written by WriteSummaryParquet. A row with
// runs > 0 is Applicable and its note is split at "; " into Warnings; a
// row with runs 0 is not, and its note is Note. Metrics not in the file
// (NISInBounds) are NaN.
//
// # Files of other versions
//
// Columns are found by name, in any order. A file of an earlier estbench
// may lack the columns added since (anees_run_median, pred_rmse,
// evals_per_step, mean_ess, repairs): their metrics read as NaN, not measured, and Repairs, a
// count, as 0, which there means not counted rather than none needed.
// Columns the reader does not know (a file of a later version) are
// ignored. Any other column missing, or of another type, is an error
// naming the file and the column. ReadRunsParquet and ReadCurvesParquet
// follow the same rule.
func ReadSummaryParquet(path string) ([]SummaryRow, error) {
	t, err := readTable(path, summarySpecs)
	if err != nil {
		return nil, err
	}
	last := len(summarySpecs) - 1
	rows := make([]SummaryRow, t.rows)
	for k := range rows {
		r := &rows[k]
		r.Problem, r.Filter, r.Config = t.strs[0][k], t.strs[1][k], t.strs[2][k]
		r.Runs, r.Diverged = int(t.ints[3][k]), int(t.ints[4][k])
		var v [summaryFloats]float64
		for j := range v {
			v[j] = t.flts[5+j][k]
		}
		setSummaryValues(r, &v)
		r.NISInBounds = math.NaN()
		r.Applicable = r.Runs > 0
		note := t.strs[last][k]
		switch {
		case !r.Applicable:
			r.Note = note
		case note != "":
			r.Warnings = strings.Split(note, "; ")
		}
	}
	return rows, nil
}

// ReadRunsParquet reads a file written by RunsWriter, or by an earlier
// version without pred_rmse (read as NaN) or repairs (read as 0, not
// counted); see ReadSummaryParquet.
func ReadRunsParquet(path string) ([]RunRow, error) {
	t, err := readTable(path, runSpecs)
	if err != nil {
		return nil, err
	}
	rows := make([]RunRow, t.rows)
	for k := range rows {
		rows[k] = RunRow{
			Problem: t.strs[0][k], Filter: t.strs[1][k], Config: t.strs[2][k],
			RunStat: metrics.RunStat{
				Run: int(t.ints[3][k]), Diverged: t.bools[4][k], DivStep: int(t.ints[5][k]), Reason: t.strs[6][k],
				RMSE: t.flts[7][k], PredRMSE: t.flts[8][k], ANEES: t.flts[9][k], ANIS: t.flts[10][k],
				NsPerStep: t.flts[11][k], MeanESS: t.flts[12][k], Repairs: int(t.ints[13][k]),
			},
		}
	}
	return rows, nil
}

// ReadCurvesParquet reads a file written by CurvesWriter, or by an earlier
// version without pred_rmse (read as NaN); see ReadSummaryParquet.
func ReadCurvesParquet(path string) ([]CurveRow, error) {
	t, err := readTable(path, curveSpecs)
	if err != nil {
		return nil, err
	}
	rows := make([]CurveRow, t.rows)
	for k := range rows {
		rows[k] = CurveRow{
			Problem: t.strs[0][k], Filter: t.strs[1][k], Config: t.strs[2][k],
			CurvePoint: metrics.CurvePoint{
				Step: int(t.ints[3][k]), RMSE: t.flts[4][k], PredRMSE: t.flts[5][k], ANEES: t.flts[6][k],
				ANEESLo: t.flts[7][k], ANEESHi: t.flts[8][k], ANIS: t.flts[9][k], Runs: int(t.ints[10][k]),
			},
		}
	}
	return rows, nil
}
