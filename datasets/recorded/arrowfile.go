package recorded

import (
	"bufio"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"time"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/ipc"
	"github.com/apache/arrow-go/v18/arrow/memory"
)

// FormatVersion is the value of the "format" schema metadata key of the
// files WriteFile writes.
const FormatVersion = "estbench-recording/1"

// Schema metadata keys.
const (
	keyFormat   = "format"
	keyDataset  = "dataset"
	keySequence = "sequence"
	keyLicence  = "licence"
	keySource   = "source"
	keyStart    = "start"
	keySensors  = "sensors"
	keySkipped  = "skipped"
)

// Field metadata keys.
const (
	keyUnit  = "unit"
	keyFrame = "frame"
	keyRole  = "role"
)

// sensorJSON is the on-disk form of a Sensor in the "sensors" metadata.
type sensorJSON struct {
	Name    string   `json:"name"`
	RateHz  float64  `json:"rate_hz"`
	Samples int      `json:"samples"`
	Columns []string `json:"columns"`
}

// Encode writes r to w as an Arrow IPC file (the schema is described at
// WriteFile). r must pass Validate.
func Encode(w io.Writer, r *Recording) error {
	if err := r.Validate(); err != nil {
		return err
	}
	schema, err := arrowSchema(r)
	if err != nil {
		return err
	}
	n := r.Len()
	cols := make([]arrow.Array, 0, 1+len(r.Columns))
	defer func() {
		for _, c := range cols {
			c.Release()
		}
	}()
	cols = append(cols, float64Array(r.T, nil, n))
	for i := range r.Columns {
		c := &r.Columns[i]
		cols = append(cols, float64Array(c.Values, c.Valid, n))
	}
	rec := array.NewRecordBatch(schema, cols, int64(n))
	defer rec.Release()
	fw, err := ipc.NewFileWriter(w, ipc.WithSchema(schema))
	if err != nil {
		return err
	}
	if err := fw.Write(rec); err != nil {
		fw.Close()
		return err
	}
	return fw.Close()
}

// float64Array wraps values and valid in an Arrow array without copying.
func float64Array(values []float64, valid Bitmap, n int) arrow.Array {
	var vb *memory.Buffer
	nulls := 0
	if valid != nil {
		nulls = n - valid.count(n)
		if nulls > 0 {
			vb = memory.NewBufferBytes(valid[:(n+7)/8])
		}
	}
	data := array.NewData(arrow.PrimitiveTypes.Float64, n,
		[]*memory.Buffer{vb, memory.NewBufferBytes(arrow.Float64Traits.CastToBytes(values))}, nil, nulls, 0)
	defer data.Release()
	return array.NewFloat64Data(data)
}

func arrowSchema(r *Recording) (*arrow.Schema, error) {
	m := &r.Meta
	sensors := make([]sensorJSON, len(m.Sensors))
	for i, s := range m.Sensors {
		sensors[i] = sensorJSON{Name: s.Name, RateHz: s.RateHz, Samples: s.Samples, Columns: s.Columns}
		if sensors[i].Columns == nil {
			sensors[i].Columns = []string{}
		}
	}
	sj, err := json.Marshal(sensors)
	if err != nil {
		return nil, fmt.Errorf("recorded: sensors: %w", err)
	}
	skipped := m.Skipped
	if skipped == nil {
		skipped = map[string]int{}
	}
	kj, err := json.Marshal(skipped)
	if err != nil {
		return nil, fmt.Errorf("recorded: skipped: %w", err)
	}
	start := ""
	if !m.Start.IsZero() {
		start = m.Start.UTC().Format(time.RFC3339Nano)
	}
	meta := arrow.NewMetadata(
		[]string{keyFormat, keyDataset, keySequence, keyLicence, keySource, keyStart, keySensors, keySkipped},
		[]string{FormatVersion, m.Dataset, m.Sequence, m.Licence, m.Source, start, string(sj), string(kj)})
	fields := make([]arrow.Field, 0, 1+len(r.Columns))
	fields = append(fields, arrow.Field{Name: "t", Type: arrow.PrimitiveTypes.Float64,
		Metadata: arrow.NewMetadata([]string{keyUnit}, []string{"s"})})
	for _, c := range r.Columns {
		fields = append(fields, arrow.Field{Name: c.Name, Type: arrow.PrimitiveTypes.Float64, Nullable: true,
			Metadata: arrow.NewMetadata([]string{keyUnit, keyFrame, keyRole}, []string{c.Unit, c.Frame, c.Role.String()})})
	}
	return arrow.NewSchema(fields, &meta), nil
}

// WriteFile writes r to path as an Arrow IPC file, through a temporary file
// in the same directory that is synced and renamed to path only when
// everything was written; on error path is left as it was.
//
// The file holds one record batch. Its first field is "t" (float64, not
// nullable, unit "s"); then one nullable float64 field per column, in
// order, with field metadata "unit", "frame" and "role" ("measured" or
// "true"); nulls where a column has no sample. Schema metadata: "format"
// (FormatVersion), "dataset", "sequence", "licence", "source", "start"
// (RFC 3339 in UTC with nanoseconds; empty when unknown), "sensors" (JSON
// array of {name, rate_hz, samples, columns}) and "skipped" (JSON object
// of line counts by kind).
func WriteFile(path string, r *Recording) error {
	tmp, err := CreateTemp(path)
	if err != nil {
		return err
	}
	if err := tmp.Write(r); err != nil {
		tmp.Abort()
		return err
	}
	return tmp.Commit()
}

// TempFile is a recording written to a temporary file that becomes its
// final path on Commit; it lets a caller write several files and rename
// them only when all were written.
type TempFile struct {
	path string
	f    *os.File
	done bool
}

// CreateTemp creates a temporary file in the directory of path.
func CreateTemp(path string) (*TempFile, error) {
	dir, base := filepath.Split(path)
	if dir == "" {
		dir = "."
	}
	f, err := os.CreateTemp(dir, "."+base+".tmp-*")
	if err != nil {
		return nil, fmt.Errorf("recorded: %w", err)
	}
	return &TempFile{path: path, f: f}, nil
}

// Write encodes r into the temporary file and syncs it.
func (t *TempFile) Write(r *Recording) error {
	w := bufio.NewWriterSize(t.f, 1<<20)
	err := Encode(w, r)
	if err == nil {
		err = w.Flush()
	}
	if err == nil {
		err = t.f.Chmod(0o644)
	}
	if err == nil {
		err = t.f.Sync()
	}
	if err != nil {
		return fmt.Errorf("recorded: writing %s: %w", t.path, err)
	}
	return nil
}

// Commit closes the temporary file and renames it to its final path; on
// failure it removes the temporary file.
func (t *TempFile) Commit() error {
	if t.done {
		return errors.New("recorded: " + t.path + ": already closed")
	}
	t.done = true
	err := t.f.Close()
	if err == nil {
		err = os.Rename(t.f.Name(), t.path)
	}
	if err != nil {
		os.Remove(t.f.Name())
		return fmt.Errorf("recorded: writing %s: %w", t.path, err)
	}
	return nil
}

// Abort closes and removes the temporary file; it is safe after Commit.
func (t *TempFile) Abort() {
	if t.done {
		return
	}
	t.done = true
	t.f.Close()
	os.Remove(t.f.Name())
}

// Mapped is a recording read from a memory-mapped file: its slices point
// into the mapping, which is private (writes to the slices do not reach the
// file). They are valid until Close.
type Mapped struct {
	Recording *Recording
	data      []byte
	unmap     func([]byte) error
}

// Close releases the mapping; the recording's slices must not be used
// afterwards.
func (m *Mapped) Close() error {
	if m.unmap == nil {
		return nil
	}
	err := m.unmap(m.data)
	m.unmap, m.data, m.Recording = nil, nil, nil
	return err
}

// Map reads a file written by WriteFile without copying or parsing its
// columns: the file is memory-mapped (read into memory where mapping is not
// available) and the recording's slices point into it.
func Map(path string) (*Mapped, error) {
	data, unmap, err := mapFile(path)
	if err != nil {
		return nil, err
	}
	rec, err := Decode(path, data)
	if err != nil {
		if unmap != nil {
			unmap(data)
		}
		return nil, err
	}
	return &Mapped{Recording: rec, data: data, unmap: unmap}, nil
}

// ReadFile reads a file written by WriteFile into memory of its own: the
// file is mapped, its column buffers copied and the mapping released.
func ReadFile(path string) (*Recording, error) {
	m, err := Map(path)
	if err != nil {
		return nil, err
	}
	defer m.Close()
	return m.Recording.clone(), nil
}

// Decode reads a recording from the bytes of an Arrow IPC file written by
// Encode; the recording's slices point into data. name is used in errors.
func Decode(name string, data []byte) (rec *Recording, err error) {
	bad := func(format string, args ...any) error {
		return &LoadError{File: name, Msg: fmt.Sprintf(format, args...)}
	}
	if len(data) == 0 {
		return nil, bad("empty file")
	}
	// arrow-go panics on some internally corrupt files (found by fuzzing).
	// A damaged input file is bad input, not a bug: report it as an error
	// naming the file instead of crashing the command.
	defer func() {
		if v := recover(); v != nil {
			rec, err = nil, bad("corrupt Arrow IPC file: %v", v)
		}
	}()
	fr, err := ipc.NewMappedFileReader(data)
	if err != nil {
		return nil, bad("not an Arrow IPC file: %v", err)
	}
	defer fr.Close()
	schema := fr.Schema()
	md := schema.Metadata()
	get := func(k string) string { v, _ := md.GetValue(k); return v }
	if f := get(keyFormat); f != FormatVersion {
		return nil, bad("format %q, want %q (not a recording written by estbench?)", f, FormatVersion)
	}
	if fr.NumRecords() != 1 {
		return nil, bad("%d record batches, want 1", fr.NumRecords())
	}
	fields := schema.Fields()
	if len(fields) == 0 || fields[0].Name != "t" {
		return nil, bad(`first field must be "t"`)
	}
	for _, f := range fields {
		if f.Type.ID() != arrow.FLOAT64 {
			return nil, &LoadError{File: name, Field: f.Name, Msg: "type " + f.Type.String() + ", want float64"}
		}
	}
	rec = &Recording{Meta: Meta{
		Dataset: get(keyDataset), Sequence: get(keySequence), Licence: get(keyLicence), Source: get(keySource),
	}}
	if s := get(keyStart); s != "" {
		if rec.Meta.Start, err = time.Parse(time.RFC3339Nano, s); err != nil {
			return nil, &LoadError{File: name, Field: keyStart, Msg: err.Error()}
		}
		rec.Meta.Start = rec.Meta.Start.UTC()
	}
	var sensors []sensorJSON
	if err := json.Unmarshal([]byte(get(keySensors)), &sensors); err != nil {
		return nil, &LoadError{File: name, Field: keySensors, Msg: err.Error()}
	}
	for _, s := range sensors {
		rec.Meta.Sensors = append(rec.Meta.Sensors, Sensor{Name: s.Name, RateHz: s.RateHz, Samples: s.Samples, Columns: s.Columns})
	}
	if s := get(keySkipped); s != "" {
		if err := json.Unmarshal([]byte(s), &rec.Meta.Skipped); err != nil {
			return nil, &LoadError{File: name, Field: keySkipped, Msg: err.Error()}
		}
		if len(rec.Meta.Skipped) == 0 {
			rec.Meta.Skipped = nil
		}
	}

	batch, err := fr.RecordBatch(0)
	if err != nil {
		return nil, bad("reading the record batch: %v", err)
	}
	defer batch.Release()
	n := int(batch.NumRows())
	for i, f := range fields {
		a := batch.Column(i).(*array.Float64)
		values := a.Float64Values()
		if len(values) != n || a.Data().Offset() != 0 {
			return nil, &LoadError{File: name, Field: f.Name, Msg: "column length does not match the batch"}
		}
		if i == 0 {
			if a.NullN() != 0 {
				return nil, &LoadError{File: name, Field: "t", Msg: "t has nulls"}
			}
			rec.T = values
			continue
		}
		fmd := f.Metadata
		c := Column{Name: f.Name, Values: values}
		c.Unit, _ = fmd.GetValue(keyUnit)
		c.Frame, _ = fmd.GetValue(keyFrame)
		switch role, _ := fmd.GetValue(keyRole); role {
		case "measured":
			c.Role = Measured
		case "true":
			c.Role = True
		default:
			return nil, &LoadError{File: name, Field: f.Name, Msg: fmt.Sprintf("role %q, want measured or true", role)}
		}
		if a.NullN() > 0 {
			c.Valid = Bitmap(a.NullBitmapBytes())
		}
		rec.Columns = append(rec.Columns, c)
	}
	if err := rec.Validate(); err != nil {
		return nil, bad("%v", err)
	}
	return rec, nil
}

// clone copies r into fresh memory.
func (r *Recording) clone() *Recording {
	c := &Recording{Meta: r.Meta, T: append([]float64(nil), r.T...), Columns: make([]Column, len(r.Columns))}
	c.Meta.Sensors = append([]Sensor(nil), r.Meta.Sensors...)
	for i, col := range r.Columns {
		col.Values = append([]float64(nil), col.Values...)
		if col.Valid != nil {
			col.Valid = append(Bitmap(nil), col.Valid[:(len(col.Values)+7)/8]...)
		}
		c.Columns[i] = col
	}
	return c
}
