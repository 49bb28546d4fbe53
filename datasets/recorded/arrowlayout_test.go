package recorded

import (
	"bytes"
	"encoding/binary"
	"errors"
	"strings"
	"testing"
	"unsafe"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/ipc"
)

// The crafted files here are recordings written by Encode with a count or
// a length in their flatbuffers patched. Where each lies follows the
// Arrow IPC file format (Apache Arrow, "Arrow Columnar Format"
// specification, sections "IPC File Format" and "Encapsulated message
// format"; tables of File.fbs, Schema.fbs and Message.fbs) and the
// FlatBuffers encoding (Google, "FlatBuffers Internals"); both from
// memory, checked against arrow-go's generated flatbuf code. Each place
// is found with fbuf and then confirmed by the value it holds before the
// patch (the number of fields, of metadata entries, of rows), which
// fbuf's reading could not produce by chance.

// arrowSpots are the byte positions in an encoded recording of the counts
// and lengths the tests patch.
type arrowSpots struct {
	footerLen    int // uint32: length of the footer
	fields       int // uint32: count of the schema's fields
	schemaMeta   int // uint32: count of the schema's metadata entries
	schemaMetaAt int // start of the schema's vector of metadata offsets
	fieldMeta    int // uint32: count of the metadata entries of field 1
	rows         int // int64: length of the record batch
	nodes        int // uint32: count of the record batch's field nodes
	buffers      int // uint32: count of the record batch's buffers
	valuesLen    int // int64: length of the values buffer of field 1
}

func locate(t testing.TB, data []byte) arrowSpots {
	t.Helper()
	var s arrowSpots
	s.footerLen = len(data) - len(arrowMagic) - 4
	flen := int(binary.LittleEndian.Uint32(data[s.footerLen:]))
	base := s.footerLen - flen
	f := &fbuf{what: "footer", b: data[base:s.footerLen], left: 1 << 30}
	root := f.root()
	schema := f.table(root, 1)
	vec := func(g *fbuf, t, i int) int { return g.ref(g.slot(t, i)) } // position of a vector's count
	s.fields = base + vec(f, schema, 1)
	s.schemaMeta = base + vec(f, schema, 2)
	s.schemaMetaAt = s.schemaMeta + 4
	field1 := f.ref(s.fields - base + 4 + 4)
	s.fieldMeta = base + vec(f, field1, 6)
	batch, _ := f.vector(root, 3, 24, "record batches")
	off := int(f.i64(batch))
	g := &fbuf{what: "message", b: data[off+8:], left: 1 << 30} // after 0xFFFFFFFF and the length
	rb := g.table(g.root(), 2)
	s.rows = off + 8 + g.slot(rb, 0)
	s.nodes = off + 8 + vec(g, rb, 1)
	s.buffers = off + 8 + vec(g, rb, 2)
	s.valuesLen = s.buffers + 4 + 16*3 + 8 // buffers: validity and values of t, then of field 1
	if f.err != nil || g.err != nil {
		t.Fatalf("locating: %v %v", f.err, g.err)
	}
	return s
}

func u32At(b []byte, at int) int64 { return int64(binary.LittleEndian.Uint32(b[at:])) }
func i64At(b []byte, at int) int64 { return int64(binary.LittleEndian.Uint64(b[at:])) }

// TestArrowSpots confirms locate on the values it finds in oddRecording's
// file: 4 fields (t, a, b, c), 8 schema metadata keys (arrowSchema), 3
// metadata keys per column field, 1001 rows, one node and two buffers per
// field, 8 bytes a row of float64 values.
func TestArrowSpots(t *testing.T) {
	var good bytes.Buffer
	if err := Encode(&good, oddRecording()); err != nil {
		t.Fatal(err)
	}
	b := good.Bytes()
	s := locate(t, b)
	for _, c := range []struct {
		what      string
		got, want int64
	}{
		{"fields", u32At(b, s.fields), 4},
		{"schema metadata", u32At(b, s.schemaMeta), 8},
		{"field metadata", u32At(b, s.fieldMeta), 3},
		{"rows", i64At(b, s.rows), 1001},
		{"nodes", u32At(b, s.nodes), 4},
		{"buffers", u32At(b, s.buffers), 8},
		{"values length", i64At(b, s.valuesLen), 8 * 1001},
	} {
		if c.got != c.want {
			t.Errorf("%s: %d, want %d", c.what, c.got, c.want)
		}
	}
}

// craftedArrow returns oddRecording's file with the little-endian value v
// written over size bytes at the spot pick chooses.
func craftedArrow(t testing.TB, pick func(arrowSpots) int, size int, v uint64) []byte {
	t.Helper()
	var good bytes.Buffer
	if err := Encode(&good, oddRecording()); err != nil {
		t.Fatal(err)
	}
	b := good.Bytes()
	at := pick(locate(t, b))
	if size == 4 {
		binary.LittleEndian.PutUint32(b[at:], uint32(v))
	} else {
		binary.LittleEndian.PutUint64(b[at:], v)
	}
	return b
}

// TestDecodeRefusesHugeDeclarations: a count or length patched to more
// than the file can hold is refused with an error naming the file and
// what is declared, before arrow-go reads it. The first case is the one
// FuzzDecode found: arrow-go makes a []arrow.Field of the declared number
// of fields before reading any, here 2^31-1 of them, which is more memory
// than the machine has, and the process died of it.
func TestDecodeRefusesHugeDeclarations(t *testing.T) {
	if need := float64(1<<31-1) * float64(unsafe.Sizeof(arrow.Field{})); need < 64<<30 {
		t.Fatalf("2^31-1 fields take only %.0f bytes; the first case would not show the hazard", need)
	}
	for _, c := range []struct {
		name string
		pick func(arrowSpots) int
		size int
		v    uint64
		want string
	}{
		{"fields", func(s arrowSpots) int { return s.fields }, 4, 1<<31 - 1, "2147483647 schema fields declared (4 bytes each)"},
		{"schema metadata", func(s arrowSpots) int { return s.schemaMeta }, 4, 1 << 30, "1073741824 schema metadata entries declared"},
		{"field metadata", func(s arrowSpots) int { return s.fieldMeta }, 4, 0xffffffff, "4294967295 field metadata entries declared"},
		{"footer length", func(s arrowSpots) int { return s.footerLen }, 4, 1 << 31, "the footer is declared 2147483648 bytes long"},
		{"rows", func(s arrowSpots) int { return s.rows }, 8, 1e12, "the record batch declares 1000000000000 rows, but its data has"},
		{"negative rows", func(s arrowSpots) int { return s.rows }, 8, 1 << 63, "declares -9223372036854775808 rows"},
		{"nodes", func(s arrowSpots) int { return s.nodes }, 4, 1 << 28, "268435456 field nodes declared"},
		{"buffers", func(s arrowSpots) int { return s.buffers }, 4, 5, "5 buffers for 4 fields"},
		{"buffer length", func(s arrowSpots) int { return s.valuesLen }, 8, 1 << 40, "a: corrupt Arrow IPC file: a buffer is declared at offset"},
		{"short buffer", func(s arrowSpots) int { return s.valuesLen }, 8, 8 * 1000, "a: corrupt Arrow IPC file: a buffer of 8000 bytes for 1001 rows, want at least 8008"},
	} {
		t.Run(c.name, func(t *testing.T) {
			b := craftedArrow(t, c.pick, c.size, c.v)
			rec, err := Decode("crafted.arrow", b)
			var le *LoadError
			if rec != nil || !errors.As(err, &le) || !strings.HasPrefix(err.Error(), "crafted.arrow: ") || !strings.Contains(err.Error(), c.want) {
				t.Fatalf("got %v, want an error with %q", err, c.want)
			}
		})
	}
}

// TestDecodeRefusesSharedEntries: flatbuffers let many offsets point at
// one string, which arrow-go then copies once for each, so a file of n
// bytes can make it copy about n*n/8 bytes. Here every schema metadata
// entry points at the one of "source", a 20,000-byte string: decoded it
// would be 8 times that, more than the footer holds, which no honest
// writer produces.
func TestDecodeRefusesSharedEntries(t *testing.T) {
	rec := oddRecording()
	rec.Meta.Source = strings.Repeat("s", 20000)
	var buf bytes.Buffer
	if err := Encode(&buf, rec); err != nil {
		t.Fatal(err)
	}
	b := buf.Bytes()
	s := locate(t, b)
	if _, err := Decode("shared.arrow", b); err != nil {
		t.Fatalf("before the patch: %v", err)
	}
	n := int(u32At(b, s.schemaMeta))
	target := -1
	for j := range n {
		kv := s.schemaMetaAt + 4*j + int(u32At(b, s.schemaMetaAt+4*j)) // a KeyValue table
		vt := kv - int(int32(u32At(b, kv)))
		key := kv + int(binary.LittleEndian.Uint16(b[vt+4:])) // field 0: key
		key += int(u32At(b, key))
		if string(b[key+4:key+4+int(u32At(b, key))]) == keySource {
			target = kv
		}
	}
	if target < 0 {
		t.Fatal("no source entry found")
	}
	for j := range n {
		binary.LittleEndian.PutUint32(b[s.schemaMetaAt+4*j:], uint32(target-(s.schemaMetaAt+4*j)))
	}
	_, err := Decode("shared.arrow", b)
	if err == nil || !strings.Contains(err.Error(), "shared.arrow: ") || !strings.Contains(err.Error(), "referenced many times") {
		t.Fatalf("got %v", err)
	}
}

// TestDecodeRefusesCompressed: arrow-go decompresses into memory of a
// size the file declares; a recording is written uncompressed, so a
// compressed one is refused before that.
func TestDecodeRefusesCompressed(t *testing.T) {
	r := oddRecording()
	var buf bytes.Buffer
	schema, err := arrowSchema(r)
	if err != nil {
		t.Fatal(err)
	}
	var plain bytes.Buffer
	if err := Encode(&plain, r); err != nil {
		t.Fatal(err)
	}
	fr, err := ipc.NewMappedFileReader(plain.Bytes())
	if err != nil {
		t.Fatal(err)
	}
	defer fr.Close()
	batch, err := fr.RecordBatch(0)
	if err != nil {
		t.Fatal(err)
	}
	w, err := ipc.NewFileWriter(&buf, ipc.WithSchema(schema), ipc.WithZstd())
	if err != nil {
		t.Fatal(err)
	}
	if err := w.Write(batch); err != nil {
		t.Fatal(err)
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	if _, err := Decode("zstd.arrow", buf.Bytes()); err == nil || err.Error() != "zstd.arrow: compressed record batch; a recording is written uncompressed" {
		t.Fatalf("got %v", err)
	}
}

// TestDecodeRefusesOtherTypes: a field of another type is refused by name
// before arrow-go reads the schema (a union's type ids are another count
// it trusts).
func TestDecodeRefusesOtherTypes(t *testing.T) {
	var good bytes.Buffer
	if err := Encode(&good, oddRecording()); err != nil {
		t.Fatal(err)
	}
	b := good.Bytes()
	// Find the type tag of field 2 ("b"), FloatingPoint (3), and make it
	// Union (14).
	s := locate(t, b)
	base := s.footerLen - int(u32At(b, s.footerLen))
	f := &fbuf{what: "footer", b: b[base:s.footerLen], left: 1 << 30}
	field2 := f.ref(s.fields - base + 4 + 8)
	tag := f.slot(field2, 2)
	if f.err != nil || tag < 0 || b[base+tag] != 3 {
		t.Fatalf("type tag of field b not found: %v", f.err)
	}
	b[base+tag] = 14
	if _, err := Decode("union.arrow", b); err == nil || err.Error() != "union.arrow: b: type union, want float64" {
		t.Fatalf("got %v", err)
	}
}

// TestCappedAllocator: an allocation above the limit panics with the
// value Decode's recover reports; one within it is served.
func TestCappedAllocator(t *testing.T) {
	a := cappedAllocator{limit: 1000}
	if b := a.Allocate(1000); len(b) != 1000 {
		t.Fatalf("allocated %d bytes", len(b))
	} else if b = a.Reallocate(10, b); len(b) != 10 {
		t.Fatalf("reallocated to %d bytes", len(b))
	} else {
		a.Free(b)
	}
	for _, f := range []func(){func() { a.Allocate(1001) }, func() { a.Reallocate(1<<40, nil) }} {
		func() {
			defer func() {
				if v, ok := recover().(allocRefused); !ok || v.limit != 1000 {
					t.Errorf("recovered %v, want an allocRefused", v)
				}
			}()
			f()
		}()
	}
}
