package recorded

import (
	"bufio"
	"bytes"
	"encoding/binary"
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
	// arrow-go trusts the counts a file declares: check them first.
	if err := checkLayout(name, data); err != nil {
		return nil, err
	}
	// arrow-go panics on some internally corrupt files (found by fuzzing).
	// A damaged input file is bad input, not a bug: report it as an error
	// naming the file instead of crashing the command.
	defer func() {
		if v := recover(); v != nil {
			if r, ok := v.(allocRefused); ok {
				rec, err = nil, bad("corrupt Arrow IPC file: it makes the reader allocate %d bytes, more than the file's %d", r.size, r.limit)
				return
			}
			rec, err = nil, bad("corrupt Arrow IPC file: %v", v)
		}
	}()
	fr, err := ipc.NewMappedFileReader(data, ipc.WithAllocator(cappedAllocator{limit: len(data)}))
	if err != nil {
		return nil, bad("not an Arrow IPC file: %v", err)
	}
	defer fr.Close()
	schema := fr.Schema()
	md := schema.Metadata()
	get := func(k string) string { v, _ := md.GetValue(k); return v }
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

// arrowMagic opens and closes an Arrow IPC file. The file is the magic
// padded to 8 bytes, the stream of messages, the footer (a flatbuffer),
// its length as a little-endian int32, and the magic again (Apache Arrow
// columnar format specification, "IPC File Format").
const arrowMagic = "ARROW1"

// arrowTypeNames are the members of the Type union of the Arrow schema
// flatbuffer (Schema.fbs), by tag.
var arrowTypeNames = [...]string{"none", "null", "int", "floating point", "binary", "utf8", "bool",
	"decimal", "date", "time", "timestamp", "interval", "list", "struct", "union", "fixed-size binary",
	"fixed-size list", "map", "duration", "large binary", "large utf8", "large list", "run-end encoded",
	"binary view", "utf8 view", "list view", "large list view"}

// checkLayout checks what the Arrow IPC file in data declares against its
// size before arrow-go reads it. arrow-go trusts the counts in a file's
// flatbuffers: it makes a slice of the declared number of fields or
// metadata entries before reading them, so a few patched bytes make it
// attempt an allocation of many gigabytes, and the process dies of it (no
// recover catches that; found by FuzzDecode). checkLayout reads the
// footer and the record batch's metadata with every offset and count
// checked, counts what they reference against their size (a table or
// string referenced many times would be decoded many times), and refuses
// what Encode never writes and arrow-go would decode into memory of its
// own: dictionaries, compressed buffers, nested fields, types other than
// floating point. Its errors are *LoadErrors.
func checkLayout(name string, data []byte) error {
	bad := func(format string, args ...any) error {
		return &LoadError{File: name, Msg: fmt.Sprintf(format, args...)}
	}
	size := len(data)
	if size < 2*8+4 || !bytes.HasPrefix(data, []byte(arrowMagic)) || !bytes.HasSuffix(data, []byte(arrowMagic)) {
		return bad("not an Arrow IPC file (no %s magic at both ends)", arrowMagic)
	}
	end := size - len(arrowMagic) - 4 // end of the footer
	footerLen := int(binary.LittleEndian.Uint32(data[end:]))
	if footerLen > end-8 {
		return bad("corrupt Arrow IPC file: the footer is declared %d bytes long, but the file has %d bytes", footerLen, size)
	}
	dataEnd := end - footerLen
	f := &fbuf{what: "footer", b: data[dataEnd:end], left: footerLen}
	root := f.root()
	schema := f.table(root, 1)
	if f.err == nil && schema < 0 {
		return bad("corrupt Arrow IPC file: the footer has no schema")
	}
	var format string
	f.keyValues(schema, 2, "schema metadata entries", func(k, v string) {
		if k == keyFormat {
			format = v
		}
	})
	if f.err == nil && format != FormatVersion {
		return bad("format %q, want %q (not a recording written by estbench?)", format, FormatVersion)
	}
	if _, n := f.vector(root, 2, 24, "dictionary batches"); n != 0 {
		return bad("%d dictionary batches; a recording has none", n)
	}
	batch, n := f.vector(root, 3, 24, "record batches")
	if f.err == nil && n != 1 {
		return bad("%d record batches, want 1", n)
	}
	start, nf := f.vector(schema, 1, 4, "schema fields")
	names := make([]string, 0, nf)
	for i := range nf {
		t := f.tableAt(f.ref(start + 4*i))
		fname := f.str(t, 0, "bytes of a field name")
		names = append(names, fname)
		if _, n := f.vector(t, 5, 4, "child fields"); n != 0 && f.err == nil {
			return &LoadError{File: name, Field: fname, Msg: "nested fields; a recording has flat float64 fields"}
		}
		if f.slot(t, 4) >= 0 && f.err == nil {
			return &LoadError{File: name, Field: fname, Msg: "dictionary-encoded; a recording has plain float64 fields"}
		}
		if tag := f.u8Field(t, 2); tag != 3 && f.err == nil { // 3: FloatingPoint
			tn := fmt.Sprintf("tag %d", tag)
			if tag < len(arrowTypeNames) {
				tn = arrowTypeNames[tag]
			}
			return &LoadError{File: name, Field: fname, Msg: "type " + tn + ", want float64"}
		}
		if f.table(t, 3) < 0 && f.err == nil {
			return &LoadError{File: name, Field: fname, Msg: "corrupt Arrow IPC file: the field has no type"}
		}
		f.keyValues(t, 6, "field metadata entries", nil)
	}
	// The record batch's block: offset, metadata length (with its padding
	// to 8 bytes), body length.
	off, meta, body := f.i64(batch), int64(int32(f.u32(batch+8))), f.i64(batch+16)
	if f.err != nil {
		return bad("corrupt Arrow IPC file: %v", f.err)
	}
	if off < 8 || meta < 8 || body < 0 || off > int64(dataEnd) || meta > int64(dataEnd)-off || body > int64(dataEnd)-off-meta {
		return bad("corrupt Arrow IPC file: the record batch is declared at offset %d with %d bytes of metadata and %d of data, but the file has %d bytes before its footer",
			off, meta, body, dataEnd)
	}
	// The metadata is a flatbuffer Message after a continuation marker
	// 0xFFFFFFFF and its length, or (before Arrow 0.15) only the length.
	m := data[off : off+meta]
	if binary.LittleEndian.Uint32(m) == 0xFFFFFFFF {
		m = m[8:]
	} else {
		m = m[4:]
	}
	g := &fbuf{what: "record batch metadata", b: m, left: len(m)}
	msg := g.root()
	if typ := g.u8Field(msg, 1); typ != 3 && g.err == nil { // 3: RecordBatch
		return bad("corrupt Arrow IPC file: the record batch block holds a message of type %d, not a record batch", typ)
	}
	g.keyValues(msg, 4, "record batch metadata entries", nil)
	rb := g.table(msg, 2)
	if g.err == nil && rb < 0 {
		return bad("corrupt Arrow IPC file: the record batch message has no header")
	}
	rows := g.i64Field(rb, 0)
	if g.slot(rb, 3) >= 0 && g.err == nil {
		return bad("compressed record batch; a recording is written uncompressed")
	}
	nodes, nn := g.vector(rb, 1, 16, "field nodes")
	bufs, nb := g.vector(rb, 2, 16, "buffers")
	if g.err != nil {
		return bad("corrupt Arrow IPC file: %v", g.err)
	}
	if rows < 0 || rows > body/8 {
		return bad("the record batch declares %d rows, but its data has %d bytes, room for at most %d rows of float64", rows, body, body/8)
	}
	if nn != nf || nb != 2*nf {
		return bad("corrupt Arrow IPC file: the record batch has %d field nodes and %d buffers for %d fields, want 1 and 2 per field", nn, nb, nf)
	}
	for i, fname := range names {
		ferr := func(format string, args ...any) error {
			return &LoadError{File: name, Field: fname, Msg: fmt.Sprintf(format, args...)}
		}
		length, nulls := g.i64(nodes+16*i), g.i64(nodes+16*i+8)
		if length != rows {
			return ferr("corrupt Arrow IPC file: %d values declared in a record batch of %d rows", length, rows)
		}
		if nulls < 0 || nulls > length {
			return ferr("corrupt Arrow IPC file: %d nulls declared among %d values", nulls, length)
		}
		for k, need := range [2]int64{(rows + 7) / 8, 8 * rows} { // validity bitmap, values
			at, n := g.i64(bufs+16*(2*i+k)), g.i64(bufs+16*(2*i+k)+8)
			if at < 0 || n < 0 || at > body || n > body-at {
				return ferr("corrupt Arrow IPC file: a buffer is declared at offset %d with %d bytes, but the record batch data has %d bytes", at, n, body)
			}
			if n < need && (k == 1 || nulls > 0) {
				return ferr("corrupt Arrow IPC file: a buffer of %d bytes for %d rows, want at least %d", n, rows, need)
			}
		}
	}
	return nil
}

// fbuf reads a flatbuffer with every offset and count checked (the
// flatbuffers encoding: a table starts with the signed offset back to
// its vtable, whose uint16s are the vtable size, the table size and the
// offset of each field, 0 when absent; offsets to tables, vectors and
// strings are uint32s relative to where they are stored; a vector or
// string is a uint32 count and its elements). The first error sticks:
// once err is set, every read returns 0 or -1.
type fbuf struct {
	what string // "footer", ...
	b    []byte
	left int // bytes of tables, vectors and strings not yet read
	err  error
}

func (f *fbuf) fail(format string, args ...any) {
	if f.err == nil {
		f.err = fmt.Errorf(f.what+": "+format, args...)
	}
}

func (f *fbuf) in(at, n int) bool {
	if f.err != nil {
		return false
	}
	if at < 0 || at > len(f.b)-n {
		f.fail("offset %d outside its %d bytes", at, len(f.b))
		return false
	}
	return true
}

func (f *fbuf) u8(at int) int {
	if !f.in(at, 1) {
		return 0
	}
	return int(f.b[at])
}

func (f *fbuf) u16(at int) int {
	if !f.in(at, 2) {
		return 0
	}
	return int(binary.LittleEndian.Uint16(f.b[at:]))
}

func (f *fbuf) u32(at int) int {
	if !f.in(at, 4) {
		return 0
	}
	return int(binary.LittleEndian.Uint32(f.b[at:]))
}

func (f *fbuf) i64(at int) int64 {
	if !f.in(at, 8) {
		return 0
	}
	return int64(binary.LittleEndian.Uint64(f.b[at:]))
}

// u8Field and i64Field return field i of the table at t, 0 when absent.
func (f *fbuf) u8Field(t, i int) int {
	if s := f.slot(t, i); s >= 0 {
		return f.u8(s)
	}
	return 0
}

func (f *fbuf) i64Field(t, i int) int64 {
	if s := f.slot(t, i); s >= 0 {
		return f.i64(s)
	}
	return 0
}

// charge counts n bytes read against the size of the buffer.
func (f *fbuf) charge(n int, what string) {
	if f.left -= n; f.left < 0 {
		f.fail("the tables, strings and vectors it references add up to more than its %d bytes (at its %s; one entry referenced many times?)", len(f.b), what)
	}
}

// ref follows the offset stored at at.
func (f *fbuf) ref(at int) int {
	if f.err != nil {
		return -1
	}
	return at + f.u32(at)
}

func (f *fbuf) root() int { return f.tableAt(f.ref(0)) }

// tableAt checks the table at t and charges its size.
func (f *fbuf) tableAt(t int) int {
	vt := t - int(int32(f.u32(t)))
	if vsize := f.u16(vt); vsize < 4 && f.err == nil {
		f.fail("a vtable of %d bytes", vsize)
	}
	f.charge(max(f.u16(vt+2), 4), "tables")
	if f.err != nil {
		return -1
	}
	return t
}

// slot returns the position of field i of the table at t, or -1 when the
// field is absent.
func (f *fbuf) slot(t, i int) int {
	if f.err != nil || t < 0 {
		return -1
	}
	vt := t - int(int32(f.u32(t)))
	if 4+2*i >= f.u16(vt) {
		return -1
	}
	o := f.u16(vt + 4 + 2*i)
	if o == 0 || f.err != nil {
		return -1
	}
	return t + o
}

// table returns the table that field i of the table at t refers to, or
// -1 when the field is absent.
func (f *fbuf) table(t, i int) int {
	s := f.slot(t, i)
	if s < 0 {
		return -1
	}
	return f.tableAt(f.ref(s))
}

// vector returns where the elements of the vector that field i of the
// table at t refers to start, and their count; 0, 0 when the field is
// absent. what names the elements in errors.
func (f *fbuf) vector(t, i, elem int, what string) (int, int) {
	s := f.slot(t, i)
	if s < 0 {
		return 0, 0
	}
	v := f.ref(s)
	n := f.u32(v)
	if f.err != nil {
		return 0, 0
	}
	if n > (len(f.b)-v-4)/elem {
		f.fail("%d %s declared (%d bytes each), but it has %d bytes", n, what, elem, len(f.b))
		return 0, 0
	}
	f.charge(n*elem, what)
	if f.err != nil {
		return 0, 0
	}
	return v + 4, n
}

// str returns the string that field i of the table at t refers to.
func (f *fbuf) str(t, i int, what string) string {
	start, n := f.vector(t, i, 1, what)
	return string(f.b[start : start+n])
}

// keyValues reads the KeyValue tables (key, value) of the vector field i
// of the table at t and calls fn, when not nil, with each.
func (f *fbuf) keyValues(t, i int, what string, fn func(k, v string)) {
	start, n := f.vector(t, i, 4, what)
	for j := range n {
		kv := f.tableAt(f.ref(start + 4*j))
		k, v := f.str(kv, 0, "bytes of metadata keys"), f.str(kv, 1, "bytes of metadata values")
		if fn != nil && f.err == nil {
			fn(k, v)
		}
	}
}

// cappedAllocator is the allocator Decode gives arrow-go: it refuses an
// allocation larger than the file with a panic Decode's recover turns
// into an error. Reading a recording allocates nothing through it (the
// columns point into the file; arrow-go allocates only to decompress or
// to merge dictionaries, which checkLayout refuses), so it is a second
// guard against a declared size checkLayout does not know of.
type cappedAllocator struct{ limit int }

// allocRefused is the panic value of a refused allocation.
type allocRefused struct{ size, limit int }

func (a cappedAllocator) Allocate(size int) []byte {
	if size > a.limit {
		panic(allocRefused{size, a.limit})
	}
	return memory.DefaultAllocator.Allocate(size)
}

func (a cappedAllocator) Reallocate(size int, b []byte) []byte {
	if size > a.limit {
		panic(allocRefused{size, a.limit})
	}
	return memory.DefaultAllocator.Reallocate(size, b)
}

func (a cappedAllocator) Free(b []byte) { memory.DefaultAllocator.Free(b) }
