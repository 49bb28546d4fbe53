package recorded

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"reflect"
	"strings"
	"testing"
	"time"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/ipc"
	"github.com/apache/arrow-go/v18/arrow/memory"

	"github.com/estbench/estbench/datasets"
)

// oddRecording has 1001 rows (not a multiple of 8) of arbitrary bit
// patterns: NaNs with payloads, -0, subnormals, infinities, the extremes;
// one column all valid, one all null, one with scattered nulls.
func oddRecording() *Recording {
	rng := rand.New(rand.NewPCG(7, 11))
	const n = 1001
	rec := &Recording{Meta: Meta{
		Dataset: "harbour-launch", Sequence: "run 3 / ü", Licence: "ours", Source: "constructed\nover two lines",
		Start:   time.Date(2024, 3, 9, 17, 4, 5, 123456789, time.UTC),
		Sensors: []Sensor{{Name: "imu", RateHz: 1 / 0.0035, Samples: n, Columns: []string{"a", "b"}}, {Name: "gnss", RateHz: 0.1, Samples: 3, Columns: []string{"c"}}},
		Skipped: map[string]int{"TYPE_WIFI": 3, "other": 1},
	}}
	rec.T = make([]float64, n)
	for i := range rec.T {
		rec.T[i] = float64(i)*0.0035 - 1
	}
	special := []uint64{0x7ff8000000000001, 0xfff0000000000abc, 0x8000000000000000, 1, 0x7fefffffffffffff,
		math.Float64bits(math.Inf(1)), math.Float64bits(math.Inf(-1)), 0x000fffffffffffff}
	mk := func(name string, role Role, nullEvery int) Column {
		c := Column{Name: name, Unit: "rad/s", Frame: "sensor", Role: role, Values: make([]float64, n)}
		for i := range c.Values {
			c.Values[i] = math.Float64frombits(rng.Uint64())
		}
		for i, b := range special {
			c.Values[i*97] = math.Float64frombits(b)
		}
		if nullEvery > 0 {
			c.Valid = NewBitmap(n)
			for i := range c.Values {
				if i%nullEvery != 0 {
					c.Valid.Set(i)
				}
			}
		}
		return c
	}
	rec.Columns = []Column{mk("a", Measured, 0), mk("b", True, 3), mk("c", Measured, 1)}
	// Stray bits past the last row must not matter.
	rec.Columns[1].Valid[len(rec.Columns[1].Valid)-1] |= 0x80
	return rec
}

func checkSame(t *testing.T, got, want *Recording) {
	t.Helper()
	if !reflect.DeepEqual(got.Meta, want.Meta) {
		t.Errorf("meta\n%+v\nwant\n%+v", got.Meta, want.Meta)
	}
	if !equalBits(got.T, want.T) {
		t.Errorf("T differs")
	}
	if len(got.Columns) != len(want.Columns) {
		t.Fatalf("%d columns, want %d", len(got.Columns), len(want.Columns))
	}
	for j := range want.Columns {
		g, w := &got.Columns[j], &want.Columns[j]
		if g.Name != w.Name || g.Unit != w.Unit || g.Frame != w.Frame || g.Role != w.Role {
			t.Errorf("column %d: %s %s %s %v, want %s %s %s %v", j, g.Name, g.Unit, g.Frame, g.Role, w.Name, w.Unit, w.Frame, w.Role)
		}
		if !equalBits(g.Values, w.Values) {
			t.Errorf("column %s: values differ", w.Name)
		}
		allValid := w.Valid == nil || w.Count() == len(w.Values)
		if allValid != (g.Valid == nil) {
			t.Errorf("column %s: bitmap %v, want nil %v", w.Name, g.Valid != nil, allValid)
		}
		for i := range w.Values {
			if g.Has(i) != w.Has(i) {
				t.Fatalf("column %s row %d: valid %v, want %v", w.Name, i, g.Has(i), w.Has(i))
			}
		}
	}
}

func TestRoundTripBitForBit(t *testing.T) {
	rec := oddRecording()
	p := filepath.Join(t.TempDir(), "odd.arrow")
	if err := WriteFile(p, rec); err != nil {
		t.Fatal(err)
	}
	got, err := ReadFile(p)
	if err != nil {
		t.Fatal(err)
	}
	checkSame(t, got, rec)
	m, err := Map(p)
	if err != nil {
		t.Fatal(err)
	}
	checkSame(t, m.Recording, rec)
	if err := m.Close(); err != nil {
		t.Fatal(err)
	}
	// An all-null column reads back with a bitmap and NaN-free values kept.
	if c := got.Column("c"); c.Count() != 0 || c.Valid == nil {
		t.Errorf("all-null column: %d valid", c.Count())
	}
	// A zero-row recording.
	empty := &Recording{Meta: Meta{Dataset: "d"}, T: []float64{}, Columns: []Column{{Name: "x", Values: []float64{}}}}
	if err := WriteFile(p, empty); err != nil {
		t.Fatal(err)
	}
	if got, err := ReadFile(p); err != nil || got.Len() != 0 || len(got.Columns) != 1 {
		t.Fatalf("empty: %v %+v", err, got)
	}
}

func TestRoundTripBROAD(t *testing.T) {
	rec, err := LoadCSV(broadMapping(t), broadDir(t))
	if err != nil {
		t.Fatal(err)
	}
	p := filepath.Join(t.TempDir(), "broad.arrow")
	if err := WriteFile(p, rec); err != nil {
		t.Fatal(err)
	}
	got, err := ReadFile(p)
	if err != nil {
		t.Fatal(err)
	}
	checkSame(t, got, rec)
}

func TestWriteFileLeavesNothingOnError(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "r.arrow")
	if err := os.WriteFile(p, []byte("old"), 0o644); err != nil {
		t.Fatal(err)
	}
	bad := &Recording{T: []float64{0, 0}} // not strictly increasing
	if err := WriteFile(p, bad); err == nil || !strings.Contains(err.Error(), "strictly increasing") {
		t.Fatalf("err %v", err)
	}
	if b, _ := os.ReadFile(p); string(b) != "old" {
		t.Errorf("old file changed: %q", b)
	}
	if ents, _ := os.ReadDir(dir); len(ents) != 1 {
		t.Errorf("left %d files", len(ents))
	}
	if err := WriteFile(filepath.Join(dir, "no", "such", "r.arrow"), oddRecording()); err == nil {
		t.Error("no error writing into a missing folder")
	}
	for _, r := range []*Recording{
		{T: []float64{0, math.NaN()}},
		{T: []float64{0}, Columns: []Column{{Name: "t", Values: []float64{1}}}},
		{T: []float64{0}, Columns: []Column{{Name: "a", Values: []float64{1}}, {Name: "a", Values: []float64{1}}}},
		{T: []float64{0}, Columns: []Column{{Name: "a", Values: []float64{1, 2}}}},
		{T: make([]float64, 9), Columns: []Column{{Name: "a", Values: make([]float64, 9), Valid: NewBitmap(8)}}},
	} {
		if err := r.Validate(); err == nil {
			t.Errorf("Validate accepted %+v", r)
		}
	}
}

func TestDecodeRejects(t *testing.T) {
	if _, err := Decode("x", nil); err == nil || err.Error() != "x: empty file" {
		t.Errorf("empty: %v", err)
	}
	if _, err := Decode("x", []byte("t,gyro_x\n0,1\n")); err == nil || !strings.Contains(err.Error(), "not an Arrow IPC file") {
		t.Errorf("csv: %v", err)
	}
	// An Arrow file of someone else's: no format key.
	schema := arrow.NewSchema([]arrow.Field{{Name: "t", Type: arrow.PrimitiveTypes.Float64}}, nil)
	var buf bytes.Buffer
	b := array.NewFloat64Builder(memory.DefaultAllocator)
	b.AppendValues([]float64{1, 2}, nil)
	col := b.NewArray()
	rec := array.NewRecordBatch(schema, []arrow.Array{col}, 2)
	w, err := ipc.NewFileWriter(&buf, ipc.WithSchema(schema))
	if err != nil {
		t.Fatal(err)
	}
	if err := w.Write(rec); err != nil {
		t.Fatal(err)
	}
	w.Close()
	if _, err := Decode("other.arrow", buf.Bytes()); err == nil || !strings.Contains(err.Error(), `format ""`) {
		t.Errorf("foreign file: %v", err)
	}
	// A recording cut short.
	var good bytes.Buffer
	if err := Encode(&good, oddRecording()); err != nil {
		t.Fatal(err)
	}
	if _, err := Decode("cut.arrow", good.Bytes()[:good.Len()/2]); err == nil {
		t.Error("truncated file decoded")
	}
}

func TestSequenceTo(t *testing.T) {
	nan := math.NaN()
	valid := NewBitmap(4)
	for _, i := range []int{0, 1, 3} {
		valid.Set(i)
	}
	rec := &Recording{T: []float64{0, 0.5, 1, 1.5}, Columns: []Column{
		{Name: "z1", Values: []float64{1, 2, 3, 4}},
		{Name: "z2", Values: []float64{10, 20, nan, 40}, Valid: valid},
		{Name: "x", Role: True, Values: []float64{5, 6, nan, 8}, Valid: valid},
	}}
	var seq datasets.Sequence
	if err := rec.SequenceTo(&seq, []string{"z2", "z1"}, []string{"x"}); err != nil {
		t.Fatal(err)
	}
	if seq.Steps != 3 || seq.Nx != 1 || seq.Nz != 2 || seq.X0[0] != 5 {
		t.Fatalf("sequence %+v", seq)
	}
	if !equalBits(seq.T, []float64{0.5, 1, 1.5}) || !equalBits(seq.Meas(1), []float64{20, 2}) || seq.Meas(2) != nil || !equalBits(seq.Meas(3), []float64{40, 4}) {
		t.Errorf("T %v, z %v %v %v", seq.T, seq.Meas(1), seq.Meas(2), seq.Meas(3))
	}
	if seq.State(1)[0] != 6 || !math.IsNaN(seq.State(2)[0]) || seq.State(3)[0] != 8 {
		t.Errorf("truth %v", seq.Truth)
	}
	if err := rec.SequenceTo(&seq, []string{"nope"}, nil); err == nil || !strings.Contains(err.Error(), `no column "nope"`) {
		t.Errorf("unknown column: %v", err)
	}
	if err := rec.SequenceTo(&seq, nil, []string{"x"}); err == nil {
		t.Error("no measured columns accepted")
	}
}

// TestArrowIndependentReader reads a recording with apache-arrow 21.2.0
// (the Apache Arrow project's JavaScript implementation, Apache-2.0, from
// the npm registry), which shares no code with arrow-go, through
// testdata/check_arrow.mjs, and compares schema, metadata, nulls and the
// bits of every value. It needs node and the package folder in
// ESTBENCH_APACHE_ARROW (npm install apache-arrow@21.2.0; the folder is
// node_modules/apache-arrow) and is skipped without them.
func TestArrowIndependentReader(t *testing.T) {
	pkg := os.Getenv("ESTBENCH_APACHE_ARROW")
	if pkg == "" {
		t.Skip("set ESTBENCH_APACHE_ARROW to an apache-arrow package folder (npm install apache-arrow@21.2.0) to check the files with a second Arrow reader")
	}
	node, err := exec.LookPath("node")
	if err != nil {
		t.Skip("node not found")
	}
	rec := oddRecording()
	p := filepath.Join(t.TempDir(), "odd.arrow")
	if err := WriteFile(p, rec); err != nil {
		t.Fatal(err)
	}
	out, err := exec.Command(node, filepath.Join("testdata", "check_arrow.mjs"), pkg, p).Output()
	if err != nil {
		t.Fatalf("node: %v", err)
	}
	var got struct {
		Rows     int               `json:"rows"`
		Metadata map[string]string `json:"metadata"`
		Fields   []struct {
			Name     string            `json:"name"`
			Type     string            `json:"type"`
			Nullable bool              `json:"nullable"`
			Metadata map[string]string `json:"metadata"`
			Nulls    int               `json:"nulls"`
			Valid    []bool            `json:"valid"`
			Bits     []string          `json:"bits"`
		} `json:"fields"`
	}
	if err := json.Unmarshal(out, &got); err != nil {
		t.Fatal(err)
	}
	wantMeta := map[string]string{
		"format": FormatVersion, "dataset": "harbour-launch", "sequence": "run 3 / ü", "licence": "ours",
		"source": "constructed\nover two lines", "start": "2024-03-09T17:04:05.123456789Z",
		"sensors": `[{"name":"imu","rate_hz":285.7142857142857,"samples":1001,"columns":["a","b"]},{"name":"gnss","rate_hz":0.1,"samples":3,"columns":["c"]}]`,
		"skipped": `{"TYPE_WIFI":3,"other":1}`,
	}
	if got.Rows != rec.Len() || !reflect.DeepEqual(got.Metadata, wantMeta) || len(got.Fields) != 1+len(rec.Columns) {
		t.Fatalf("rows %d, metadata %v, %d fields", got.Rows, got.Metadata, len(got.Fields))
	}
	for i, f := range got.Fields {
		values, col := rec.T, (*Column)(nil)
		wantFM := map[string]string{"unit": "s"}
		if i > 0 {
			col = &rec.Columns[i-1]
			values = col.Values
			wantFM = map[string]string{"unit": col.Unit, "frame": col.Frame, "role": col.Role.String()}
		}
		if f.Type != "Float64" || f.Nullable != (i > 0) || !reflect.DeepEqual(f.Metadata, wantFM) {
			t.Errorf("field %s: %s nullable %v metadata %v", f.Name, f.Type, f.Nullable, f.Metadata)
		}
		nulls := 0
		for j, v := range values {
			valid := col == nil || col.Has(j)
			if !valid {
				nulls++
			}
			if f.Valid[j] != valid {
				t.Fatalf("%s row %d: valid %v, want %v", f.Name, j, f.Valid[j], valid)
			}
			if want := fmt.Sprintf("%016x", math.Float64bits(v)); f.Bits[j] != want {
				t.Fatalf("%s row %d: bits %s, want %s", f.Name, j, f.Bits[j], want)
			}
		}
		if f.Nulls != nulls {
			t.Errorf("%s: %d nulls, want %d", f.Name, f.Nulls, nulls)
		}
	}
}

// FuzzDecode: a damaged .arrow file is bad input. Decode must return an
// error naming the file, never panic, whatever bytes it is given.
func FuzzDecode(f *testing.F) {
	var good bytes.Buffer
	if err := Encode(&good, oddRecording()); err != nil {
		f.Fatal(err)
	}
	f.Add(good.Bytes())
	b := good.Bytes()
	for _, at := range []int{8, 64, len(b) / 2, len(b) - 20} {
		bad := append([]byte(nil), b...)
		bad[at] ^= 0xff
		f.Add(bad)
	}
	// Files declaring more than they hold (see TestDecodeRefusesHugeDeclarations).
	f.Add(craftedArrow(f, func(s arrowSpots) int { return s.fields }, 4, 1<<31-1))
	f.Add(craftedArrow(f, func(s arrowSpots) int { return s.rows }, 8, 1e12))
	f.Add(craftedArrow(f, func(s arrowSpots) int { return s.valuesLen }, 8, 1<<40))
	f.Fuzz(func(t *testing.T, data []byte) {
		rec, err := Decode("damaged.arrow", data)
		if err == nil && rec == nil {
			t.Fatal("nil recording without an error")
		}
		if err != nil && !strings.Contains(err.Error(), "damaged.arrow") {
			t.Fatalf("error does not name the file: %v", err)
		}
	})
}
