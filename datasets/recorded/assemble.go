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
	t      []int64
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

// order sorts the samples by time (stably, so equal times keep file order)
// and drops every sample whose time an earlier one has, reporting it.
func (s *stream) order(e *errs) {
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
	w := 0
	for r := range s.t {
		if w > 0 && s.t[r] == s.t[w-1] {
			e.add(s.file, int(s.lines[r]), "", "duplicate time: line "+strconv.Itoa(int(s.lines[w-1]))+" has the same "+s.sensor+" time")
			continue
		}
		if w != r {
			s.t[w], s.lines[w] = s.t[r], s.lines[r]
			for i := range s.cols {
				s.cols[i].Values[w] = s.cols[i].Values[r]
			}
		}
		w++
	}
	s.t, s.lines = s.t[:w], s.lines[:w]
	for i := range s.cols {
		s.cols[i].Values = s.cols[i].Values[:w]
	}
}

func permute[T any](v []T, perm []int) []T {
	out := make([]T, len(v))
	for i, p := range perm {
		out[i] = v[p]
	}
	return out
}

// assemble joins streams on time into one recording. Times are shifted by
// origin nanoseconds (T = (t - origin)/1e9); when unix is true, Start is
// that instant. Streams must be ordered.
func assemble(meta Meta, streams []*stream, origin int64, unix bool) *Recording {
	rec := &Recording{Meta: meta}
	if unix {
		rec.Meta.Start = time.Unix(0, origin).UTC()
	}
	times := unionTimes(streams)
	rec.T = make([]float64, len(times))
	for i, t := range times {
		rec.T[i] = float64(t-origin) / 1e9
	}
	rec.Meta.Sensors = nil
	for _, s := range streams {
		sen := Sensor{Name: s.sensor, Samples: len(s.t)}
		if n := len(s.t); n >= 2 && s.t[n-1] > s.t[0] {
			sen.RateHz = float64(n-1) / (float64(s.t[n-1]-s.t[0]) / 1e9)
		}
		same := len(s.t) == len(times)
		for i := range s.cols {
			c := s.cols[i]
			sen.Columns = append(sen.Columns, c.Name)
			if same {
				c.Valid = nanBitmap(c.Values)
			} else {
				c.Values, c.Valid = scatter(times, s.t, c.Values)
			}
			rec.Columns = append(rec.Columns, c)
		}
		rec.Meta.Sensors = append(rec.Meta.Sensors, sen)
		s.t, s.lines, s.cols = nil, nil, nil
	}
	return rec
}

// unionTimes returns the sorted distinct times of all streams; a stream
// whose times are the union is returned as is.
func unionTimes(streams []*stream) []int64 {
	var u []int64
	for _, s := range streams {
		switch {
		case u == nil:
			u = s.t
		case !slices.Equal(u, s.t):
			u = mergeTimes(u, s.t)
		}
	}
	for _, s := range streams {
		if len(s.t) == len(u) {
			// equal to the union, as every stream's times are in it
			u = s.t
			break
		}
	}
	if u == nil {
		u = []int64{}
	}
	return u
}

func mergeTimes(a, b []int64) []int64 {
	out := make([]int64, 0, max(len(a), len(b)))
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
func scatter(all, t []int64, v []float64) ([]float64, Bitmap) {
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
