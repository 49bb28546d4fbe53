package filters_test

import (
	"math/rand/v2"
	"testing"

	"github.com/estbench/estbench/filters"
	"github.com/estbench/estbench/filters/filtertest"
)

// benchSteps is the length of the simulated run the benchmarks cycle over.
const benchSteps = 200

// benchRun simulates benchSteps steps of m from a true state drawn from
// the prior, with a fixed seed.
func benchRun(m *filters.Model, x0, p0 []float64) [][]float64 {
	rng := rand.New(rand.NewPCG(2026, 12))
	xt := make([]float64, m.Nx)
	filtertest.Gaussian(xt, x0, p0, rng)
	_, zs := filtertest.Simulate(m, xt, benchSteps, rng)
	return zs
}

// benchFilter times one step (Predict + Update) per iteration, cycling
// over zs and resetting at its end, and reports ns/step.
func benchFilter(b *testing.B, f filters.Filter, x0, p0 []float64, zs [][]float64) {
	b.ReportAllocs()
	if err := f.Reset(x0, p0, nil); err != nil {
		b.Fatal(err)
	}
	k := 0
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if k == len(zs) {
			if err := f.Reset(x0, p0, nil); err != nil {
				b.Fatal(err)
			}
			k = 0
		}
		k++
		if err := f.Predict(k); err != nil {
			b.Fatalf("step %d: %v", k, err)
		}
		if err := f.Update(zs[k-1], k); err != nil {
			b.Fatalf("step %d: %v", k, err)
		}
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N), "ns/step")
}

func BenchmarkKF(b *testing.B) {
	m := filtertest.CV2D(0.5, 4)
	x0, p0 := filtertest.CV2DPrior()
	zs := benchRun(m, x0, p0)
	b.Run("problem=cv2d/filter=kf", func(b *testing.B) {
		benchFilter(b, newKF(b, m), x0, p0, zs)
	})
}
