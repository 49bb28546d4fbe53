package recorded

import (
	"bufio"
	"io"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"runtime"
	"strconv"
	"sync"
	"testing"
	"time"
)

const benchMapping = `
dataset = "survey-drone"
[[file]]
path = "imu.csv"
time = "t"
time_unit = "s"
  [[file.quantity]]
  kind = "gyro"
  columns = ["gx", "gy", "gz"]
  unit = "rad/s"
  frame = "body"
  [[file.quantity]]
  kind = "accelerometer"
  columns = ["ax", "ay", "az"]
  unit = "m/s^2"
  frame = "body"
  [[file.quantity]]
  kind = "magnetometer"
  columns = ["mx", "my", "mz"]
  unit = "uT"
  frame = "body"
`

// writeIMUCSV writes rows of a 400 Hz IMU log (a survey drone's, made up):
// time to 4 decimals and nine values in shortest round-trip form, of the
// float64 as the BROAD sample prints them (17 digits or so), or of a
// float32 as Android loggers print them (about 8).
func writeIMUCSV(tb testing.TB, path string, rows int, float32s bool) int64 {
	f, err := os.Create(path)
	if err != nil {
		tb.Fatal(err)
	}
	w := bufio.NewWriterSize(f, 1<<20)
	w.WriteString("t,gx,gy,gz,ax,ay,az,mx,my,mz\n")
	rng := rand.New(rand.NewPCG(1, 2))
	base := [9]float64{0, 0, 0, 0, 0, 9.81, 20, -5, -42}
	buf := make([]byte, 0, 256)
	for i := range rows {
		buf = strconv.AppendFloat(buf[:0], float64(i)*0.0025, 'f', 4, 64)
		for _, b := range base {
			buf = append(buf, ',')
			if v := b + rng.NormFloat64(); float32s {
				buf = strconv.AppendFloat(buf, float64(float32(v)), 'g', -1, 32)
			} else {
				buf = strconv.AppendFloat(buf, v, 'g', -1, 64)
			}
		}
		buf = append(buf, '\n')
		w.Write(buf)
	}
	if err := w.Flush(); err != nil {
		tb.Fatal(err)
	}
	fi, _ := f.Stat()
	f.Close()
	return fi.Size()
}

type countWriter struct{ n int64 }

func (c *countWriter) Write(p []byte) (int, error) { c.n += int64(len(p)); return len(p), nil }

// BenchmarkLoad1M loads a 1,000,000-row IMU CSV (10 columns) and reads its
// Arrow file back; the sub-benchmarks print the values with the digits of
// a float64 or of a float32. Besides MB/s it reports, against the size of the
// recording's Arrow file: alloc/arrow (bytes allocated by one load),
// live/arrow (heap in use after the load, the recording held) and
// peak/arrow (the highest heap in use seen during one load, sampled every
// 2 ms in a run of its own).
func BenchmarkLoad1M(b *testing.B) {
	b.Run("digits=float64", func(b *testing.B) { benchLoad1M(b, false) })
	b.Run("digits=float32", func(b *testing.B) { benchLoad1M(b, true) })
}

func benchLoad1M(b *testing.B, float32s bool) {
	const rows = 1_000_000
	dir := b.TempDir()
	size := writeIMUCSV(b, filepath.Join(dir, "imu.csv"), rows, float32s)
	m := mustMappingTB(b, benchMapping)
	rec, err := LoadCSV(m, dir)
	if err != nil {
		b.Fatal(err)
	}
	var cw countWriter
	if err := Encode(&cw, rec); err != nil {
		b.Fatal(err)
	}
	arrowSize := float64(cw.n)
	arrowPath := filepath.Join(dir, "imu.arrow")
	if err := WriteFile(arrowPath, rec); err != nil {
		b.Fatal(err)
	}
	rec = nil

	b.Run("csv", func(b *testing.B) {
		b.SetBytes(size)
		b.ReportAllocs()
		peak := peakHeap(func() { LoadCSV(m, dir) })
		var m0, m1 runtime.MemStats
		runtime.GC()
		runtime.ReadMemStats(&m0)
		var r *Recording
		b.ResetTimer()
		for range b.N {
			r, err = LoadCSV(m, dir)
			if err != nil {
				b.Fatal(err)
			}
		}
		b.StopTimer()
		runtime.ReadMemStats(&m1)
		runtime.GC()
		var m2 runtime.MemStats
		runtime.ReadMemStats(&m2)
		b.ReportMetric(float64(m1.TotalAlloc-m0.TotalAlloc)/float64(b.N)/arrowSize, "alloc/arrow")
		b.ReportMetric(float64(m2.HeapInuse)/arrowSize, "live/arrow")
		b.ReportMetric(peak/arrowSize, "peak/arrow")
		b.ReportMetric(float64(m1.Mallocs-m0.Mallocs)/float64(b.N)/rows, "allocs/row")
		runtime.KeepAlive(r)
	})
	b.Run("read", func(b *testing.B) {
		b.SetBytes(int64(arrowSize))
		b.ReportAllocs()
		for range b.N {
			if _, err := ReadFile(arrowPath); err != nil {
				b.Fatal(err)
			}
		}
	})
	b.Run("map", func(b *testing.B) {
		b.SetBytes(int64(arrowSize))
		b.ReportAllocs()
		for range b.N {
			mp, err := Map(arrowPath)
			if err != nil {
				b.Fatal(err)
			}
			// Touch every value so the mapped pages are read.
			s := 0.0
			for _, c := range mp.Recording.Columns {
				for _, v := range c.Values {
					s += v
				}
			}
			if math.IsInf(s, 0) {
				b.Log(s)
			}
			mp.Close()
		}
	})
}

// peakHeap runs f once and returns the highest HeapInuse seen, sampled
// every 2 ms, less the heap in use before.
func peakHeap(f func()) float64 {
	runtime.GC()
	var ms runtime.MemStats
	runtime.ReadMemStats(&ms)
	base := ms.HeapInuse
	var (
		mu   sync.Mutex
		peak uint64
		done = make(chan struct{})
		wg   sync.WaitGroup
	)
	wg.Add(1)
	go func() {
		defer wg.Done()
		var s runtime.MemStats
		tick := time.NewTicker(2 * time.Millisecond)
		defer tick.Stop()
		for {
			runtime.ReadMemStats(&s)
			mu.Lock()
			peak = max(peak, s.HeapInuse)
			mu.Unlock()
			select {
			case <-done:
				return
			case <-tick.C:
			}
		}
	}()
	f()
	runtime.ReadMemStats(&ms)
	close(done)
	wg.Wait()
	peak = max(peak, ms.HeapInuse)
	return float64(peak - base)
}

func mustMappingTB(tb testing.TB, text string) *Mapping {
	m, err := ParseMapping("bench.toml", []byte(text))
	if err != nil {
		tb.Fatal(err)
	}
	return m
}

// BenchmarkParseValue measures one field; it must not allocate.
func BenchmarkParseValue(b *testing.B) {
	field := []byte("-0.0042603487041181585")
	b.ReportAllocs()
	s := 0.0
	for range b.N {
		v, _ := parseValue(field)
		s += v
	}
	if s == 1 {
		b.Log(s)
	}
}

var _ io.Writer = (*countWriter)(nil)
