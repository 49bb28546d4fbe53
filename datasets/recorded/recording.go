package recorded

import (
	"errors"
	"fmt"
	"math"
	"math/bits"
	"time"

	"github.com/estbench/estbench/datasets"
)

// Recording is one sequence of real sensor data: a time column and named
// columns of measured and true quantities, nulls where a sensor has no
// sample, and metadata saying where the data came from.
type Recording struct {
	Meta    Meta
	T       []float64 // seconds from the time origin (see the package doc), strictly increasing
	Columns []Column  // each with len(T) values
}

// Meta is the provenance of a recording.
type Meta struct {
	Dataset  string    // name of the dataset ("BROAD")
	Sequence string    // id of this sequence within the dataset
	Licence  string    // licence of the data as stated upstream
	Source   string    // where the data came from and what was changed
	Start    time.Time // absolute time of T = 0 in UTC; the zero time when the source has none
	Sensors  []Sensor  // the sensors (one per source file or line type), in source order

	// Skipped counts source lines left out on purpose, by kind
	// ("TYPE_WIFI": 1171); nil when nothing was skipped.
	Skipped map[string]int
}

// Sensor is one source of samples and the columns it fills.
type Sensor struct {
	Name    string
	RateHz  float64 // mean rate, (samples-1)/(last-first time); 0 with fewer than two samples
	Samples int
	Columns []string
}

// Role says whether a column is a sensor's measurement or ground truth.
type Role uint8

const (
	Measured Role = iota // a measurement, as a filter would see it
	True                 // ground truth, for scoring
)

func (r Role) String() string {
	if r == True {
		return "true"
	}
	return "measured"
}

// Column is one quantity component over the rows of a recording.
type Column struct {
	Name   string // "gyro_x", "true_pos_x"
	Unit   string // canonical unit: "rad/s", "m/s^2", "uT", "m", "m/s", "deg", "1"
	Frame  string // frame the component is expressed in ("sensor", "enu"); for quaternions, the reference frame
	Role   Role
	Values []float64 // one per row; NaN where not valid
	Valid  Bitmap    // nil when every row is valid
}

// Has reports whether row i holds a sample.
func (c *Column) Has(i int) bool { return c.Valid == nil || c.Valid.Get(i) }

// Count returns the number of valid rows.
func (c *Column) Count() int {
	if c.Valid == nil {
		return len(c.Values)
	}
	return c.Valid.count(len(c.Values))
}

// Bitmap is a validity bitmap in Arrow's layout: bit i is bit i%8 of byte i/8.
type Bitmap []byte

// NewBitmap returns a bitmap of n clear bits.
func NewBitmap(n int) Bitmap { return make(Bitmap, (n+7)/8) }

// Get reports whether bit i is set.
func (b Bitmap) Get(i int) bool { return b[i>>3]&(1<<(i&7)) != 0 }

// Set sets bit i.
func (b Bitmap) Set(i int) { b[i>>3] |= 1 << (i & 7) }

// Clear clears bit i.
func (b Bitmap) Clear(i int) { b[i>>3] &^= 1 << (i & 7) }

// count returns the number of set bits among the first n.
func (b Bitmap) count(n int) int {
	c := 0
	full := n >> 3
	for _, x := range b[:full] {
		c += bits.OnesCount8(x)
	}
	if r := n & 7; r != 0 {
		c += bits.OnesCount8(b[full] & (1<<r - 1))
	}
	return c
}

// Len returns the number of rows.
func (r *Recording) Len() int { return len(r.T) }

// Column returns the column named name, or nil.
func (r *Recording) Column(name string) *Column {
	for i := range r.Columns {
		if r.Columns[i].Name == name {
			return &r.Columns[i]
		}
	}
	return nil
}

// Validate checks the invariants WriteFile relies on: every column has one
// value per row and a bitmap long enough for them, names are unique, not
// empty and not "t", and T is finite and strictly increasing.
func (r *Recording) Validate() error {
	n := len(r.T)
	for i, t := range r.T {
		if math.IsNaN(t) || math.IsInf(t, 0) {
			return fmt.Errorf("recorded: t[%d] is %v", i, t)
		}
		if i > 0 && !(t > r.T[i-1]) {
			return fmt.Errorf("recorded: t is not strictly increasing at row %d (%v after %v)", i, t, r.T[i-1])
		}
	}
	seen := make(map[string]bool, len(r.Columns))
	for i := range r.Columns {
		c := &r.Columns[i]
		switch {
		case c.Name == "" || c.Name == "t":
			return fmt.Errorf("recorded: column %d has the name %q", i, c.Name)
		case seen[c.Name]:
			return fmt.Errorf("recorded: two columns named %q", c.Name)
		case len(c.Values) != n:
			return fmt.Errorf("recorded: column %q has %d values for %d rows", c.Name, len(c.Values), n)
		case c.Valid != nil && len(c.Valid) < (n+7)/8:
			return fmt.Errorf("recorded: column %q has a validity bitmap of %d bytes for %d rows", c.Name, len(c.Valid), n)
		}
		seen[c.Name] = true
	}
	return nil
}

// SequenceTo fills dst from the rows of r: the measured columns, in the
// order given, form the measurement z and the truth columns the state x.
// Row 0 is step 0 (its truth is X0), rows 1..Len()-1 are steps 1..Len()-1
// and dst.T holds their times. A step has a measurement only when every
// measured column is valid in its row; truth missing in a row is NaN.
// dst's buffers are reused when large enough.
func (r *Recording) SequenceTo(dst *datasets.Sequence, measured, truth []string) error {
	if len(measured) == 0 {
		return errors.New("recorded: no measured columns")
	}
	if r.Len() < 2 {
		return fmt.Errorf("recorded: %d rows; a sequence needs at least 2", r.Len())
	}
	mc, err := r.columns(measured)
	if err != nil {
		return err
	}
	tc, err := r.columns(truth)
	if err != nil {
		return err
	}
	nz, nx, steps := len(mc), len(tc), r.Len()-1
	dst.Resize(nx, nz, steps)
	for j, c := range tc {
		dst.X0[j] = value(c, 0)
	}
	for k := 1; k <= steps; k++ {
		dst.T[k-1] = r.T[k]
		x := dst.State(k)
		for j, c := range tc {
			x[j] = value(c, k)
		}
		has := true
		z := dst.Z[(k-1)*nz : k*nz]
		for j, c := range mc {
			z[j] = c.Values[k]
			has = has && c.Has(k)
		}
		dst.Has[k-1] = has
	}
	return nil
}

func value(c *Column, i int) float64 {
	if !c.Has(i) {
		return math.NaN()
	}
	return c.Values[i]
}

func (r *Recording) columns(names []string) ([]*Column, error) {
	cs := make([]*Column, len(names))
	for i, n := range names {
		if cs[i] = r.Column(n); cs[i] == nil {
			return nil, fmt.Errorf("recorded: %s %s has no column %q", r.Meta.Dataset, r.Meta.Sequence, n)
		}
	}
	return cs, nil
}

// ColumnStats describes the sampling of one column.
type ColumnStats struct {
	Name        string
	Samples     int     // valid rows
	First, Last float64 // times of the first and last valid rows (NaN without samples)
	MeanRate    float64 // (Samples-1)/(Last-First) in Hz; 0 with fewer than two samples
	LongestGap  float64 // longest time between consecutive valid rows, seconds
	GapStart    float64 // time of the valid row that begins the longest gap
}

// Stats returns the sampling statistics of every column, in column order.
func (r *Recording) Stats() []ColumnStats {
	out := make([]ColumnStats, len(r.Columns))
	for i := range r.Columns {
		out[i] = r.columnStats(&r.Columns[i])
	}
	return out
}

func (r *Recording) columnStats(c *Column) ColumnStats {
	s := ColumnStats{Name: c.Name, First: math.NaN(), Last: math.NaN()}
	prev := -1
	for i := range r.T {
		if !c.Has(i) {
			continue
		}
		s.Samples++
		if prev < 0 {
			s.First = r.T[i]
		} else if g := r.T[i] - r.T[prev]; g > s.LongestGap {
			s.LongestGap, s.GapStart = g, r.T[prev]
		}
		prev = i
	}
	if prev >= 0 {
		s.Last = r.T[prev]
	}
	if s.Samples >= 2 {
		s.MeanRate = float64(s.Samples-1) / (s.Last - s.First)
	}
	return s
}
