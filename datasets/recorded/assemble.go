package recorded

import (
	"math"
	"slices"
	"sort"
	"strconv"
	"time"
)

// stream is the samples of one sensor as a loader reads them: times in
// integer nanoseconds of the source's time base, the line of each sample,
// and columns whose Values grow with t.
type stream struct {
	sensor string
	file   string
	t      []int64   // sample times, ns in the source's time base
	tf     []float64 // after order: seconds from the origin
	lines  []int32
	cols   []Column
	sorted bool // t has never gone backwards
}

func newStream(sensor, file string, cols []Column) *stream {
	s := &stream{sensor: sensor, file: file, cols: cols, sorted: true}
	return s
}

// grow makes room for n more samples.
func (s *stream) grow(n int) {
	s.t = slices.Grow(s.t, n)
	s.lines = slices.Grow(s.lines, n)
	for i := range s.cols {
		s.cols[i].Values = slices.Grow(s.cols[i].Values, n)
	}
}

// add appends a sample; values are in column order.
func (s *stream) add(t int64, line int, values []float64) {
	if n := len(s.t); n > 0 && t < s.t[n-1] {
		s.sorted = false
	}
	s.t = append(s.t, t)
	s.lines = append(s.lines, int32(min(line, math.MaxInt32)))
	for i, v := range values {
		s.cols[i].Values = append(s.cols[i].Values, v)
	}
}

// order sorts the samples by time (stably, so equal times keep file
// order), sets tf to their seconds from origin and drops every sample
// whose tf an earlier one has (the same time, or one too close to tell
// apart in float64 seconds), reporting it. It releases t.
func (s *stream) order(e *errs, origin int64) {
	if !s.sorted {
		perm := make([]int, len(s.t))
		for i := range perm {
			perm[i] = i
		}
		sort.SliceStable(perm, func(a, b int) bool { return s.t[perm[a]] < s.t[perm[b]] })
		s.t = permute(s.t, perm)
		s.lines = permute(s.lines, perm)
		for i := range s.cols {
			s.cols[i].Values = permute(s.cols[i].Values, perm)
		}
		s.sorted = true
	}
	s.tf = make([]float64, len(s.t))
	w := 0
	for r, t := range s.t {
		tf := seconds(t, origin)
		if w > 0 && tf == s.tf[w-1] {
			prev := strconv.Itoa(int(s.lines[w-1]))
			if t == s.t[w-1] {
				e.add(s.file, int(s.lines[r]), "", "duplicate time: line "+prev+" has the same "+s.sensor+" time")
			} else {
				e.add(s.file, int(s.lines[r]), "", "time too close to that of line "+prev+" to tell apart in float64 seconds from the origin")
			}
			continue
		}
		s.tf[w], s.t[w], s.lines[w] = tf, t, s.lines[r]
		if w != r {
			for i := range s.cols {
				s.cols[i].Values[w] = s.cols[i].Values[r]
			}
		}
		w++
	}
	s.tf = s.tf[:w]
	for i := range s.cols {
		s.cols[i].Values = s.cols[i].Values[:w]
	}
	s.t, s.lines = nil, nil
}

// seconds returns the time t ns after origin in seconds: the nearest
// float64 to the exact difference, unless that overflows int64 (times
// ±292 years apart), when it is computed in float64.
func seconds(t, origin int64) float64 {
	d := t - origin
	if (t >= origin) != (d >= 0) {
		return float64(t)/1e9 - float64(origin)/1e9
	}
	return float64(d) / 1e9
}

func permute[T any](v []T, perm []int) []T {
	out := make([]T, len(v))
	for i, p := range perm {
		out[i] = v[p]
	}
	return out
}

// assemble joins ordered streams on time into one recording; when unix
// is true, Start is the instant origin (ns after the Unix epoch).
func assemble(meta Meta, streams []*stream, origin int64, unix bool) *Recording {
	rec := &Recording{Meta: meta}
	if unix {
		rec.Meta.Start = time.Unix(0, origin).UTC()
	}
	rec.T = unionTimes(streams)
	rec.Meta.Sensors = nil
	for _, s := range streams {
		sen := Sensor{Name: s.sensor, Samples: len(s.tf)}
		if n := len(s.tf); n >= 2 && s.tf[n-1] > s.tf[0] {
			sen.RateHz = float64(n-1) / (s.tf[n-1] - s.tf[0])
		}
		same := len(s.tf) == len(rec.T)
		for i := range s.cols {
			c := s.cols[i]
			sen.Columns = append(sen.Columns, c.Name)
			if same {
				c.Valid = nanBitmap(c.Values)
			} else {
				c.Values, c.Valid = scatter(rec.T, s.tf, c.Values)
			}
			rec.Columns = append(rec.Columns, c)
		}
		rec.Meta.Sensors = append(rec.Meta.Sensors, sen)
		s.tf, s.cols = nil, nil
	}
	return rec
}

// unionTimes returns the sorted distinct times of all streams; a stream
// whose times are the union is returned as is.
func unionTimes(streams []*stream) []float64 {
	var u []float64
	for _, s := range streams {
		switch {
		case u == nil:
			u = s.tf
		case !slices.Equal(u, s.tf):
			u = mergeTimes(u, s.tf)
		}
	}
	for _, s := range streams {
		if len(s.tf) == len(u) {
			// equal to the union, as every stream's times are in it
			u = s.tf
			break
		}
	}
	if u == nil {
		u = []float64{}
	}
	return u
}

func mergeTimes(a, b []float64) []float64 {
	out := make([]float64, 0, max(len(a), len(b)))
	i, j := 0, 0
	for i < len(a) && j < len(b) {
		switch {
		case a[i] < b[j]:
			out = append(out, a[i])
			i++
		case a[i] > b[j]:
			out = append(out, b[j])
			j++
		default:
			out = append(out, a[i])
			i, j = i+1, j+1
		}
	}
	out = append(out, a[i:]...)
	return append(out, b[j:]...)
}

// scatter spreads the values at times t (a subset of all) over all times,
// NaN and null elsewhere.
func scatter(all, t, v []float64) ([]float64, Bitmap) {
	out := make([]float64, len(all))
	valid := NewBitmap(len(all))
	j := 0
	for i, at := range all {
		if j < len(t) && t[j] == at {
			out[i] = v[j]
			if !math.IsNaN(v[j]) {
				valid.Set(i)
			}
			j++
		} else {
			out[i] = math.NaN()
		}
	}
	return out, valid
}

// nanBitmap returns the validity of v (NaN is null), or nil when no value
// is NaN.
func nanBitmap(v []float64) Bitmap {
	first := -1
	for i, x := range v {
		if math.IsNaN(x) {
			first = i
			break
		}
	}
	if first < 0 {
		return nil
	}
	b := NewBitmap(len(v))
	for i := range b {
		b[i] = 0xff
	}
	if r := len(v) & 7; r != 0 {
		b[len(b)-1] = 1<<r - 1
	}
	for i := first; i < len(v); i++ {
		if math.IsNaN(v[i]) {
			b.Clear(i)
		}
	}
	return b
}
