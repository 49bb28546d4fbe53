package filters_test

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/estbench/estbench/filters"
	"github.com/estbench/estbench/filters/filtertest"
)

// ungmModel is the univariate nonstationary growth model
//
//	x_k = x_{k-1}/2 + 25 x_{k-1}/(1+x_{k-1}²) + 8 cos(1.2 k) + v_k,  v_k ~ N(0, 10)
//	z_k = x_k²/20 + w_k,                                         w_k ~ N(0, 1)
//
// of Gordon, Salmond & Smith 1993 (IEE Proc. F 140(2)) and Kitagawa 1996
// (JCGS 5(1)), with cos(1.2 k) indexed as in Arulampalam, Maskell, Gordon &
// Clapp 2002 ("A tutorial on particle filters for online
// nonlinear/non-Gaussian Bayesian tracking", IEEE TSP 50(2), its example
// section; the indexing is from memory). The batch functions hoist
// 8 cos(1.2 k) out of the particle loop.
func ungmModel() *filters.Model {
	f := func(dst, x []float64, k int) {
		c := 8 * math.Cos(1.2*float64(k))
		dst = dst[:len(x)]
		for i, v := range x {
			dst[i] = 0.5*v + 25*v/(1+v*v) + c
		}
	}
	h := func(dst, x []float64, k int) {
		dst = dst[:len(x)]
		for i, v := range x {
			dst[i] = v * v * (1.0 / 20)
		}
	}
	return &filters.Model{
		Nx: 1, Nz: 1,
		F: f, H: h, FMany: f, HMany: h,
		Q: []float64{10},
		R: []float64{1},
	}
}

// ungmSimulate draws a truth and measurement sequence of K steps from x0
// using its own stream.
func ungmSimulate(m *filters.Model, x0 float64, steps int, rng *rand.Rand) (xs, zs []float64) {
	xs = make([]float64, steps+1)
	zs = make([]float64, steps+1)
	xs[0] = x0
	var a, b [1]float64
	for k := 1; k <= steps; k++ {
		a[0] = xs[k-1]
		m.F(b[:], a[:], k)
		xs[k] = b[0] + math.Sqrt(m.Q[0])*rng.NormFloat64()
		a[0] = xs[k]
		m.H(b[:], a[:], k)
		zs[k] = b[0] + math.Sqrt(m.R[0])*rng.NormFloat64()
	}
	return xs, zs
}

// BenchmarkPF times one Predict+Update step of the bootstrap filter on
// UNGM, resampling every step.
func BenchmarkPF(b *testing.B) {
	m := ungmModel()
	const steps = 1000
	_, zs := ungmSimulate(m, 0, steps, rand.New(rand.NewPCG(1, 2)))
	for _, n := range []int{1000, 10000} {
		b.Run(fmt.Sprintf("problem=ungm/particles=%d", n), func(b *testing.B) {
			f, err := filters.NewPF(m, filters.PFConfig{Particles: n})
			if err != nil {
				b.Fatal(err)
			}
			rng := rand.New(rand.NewPCG(3, 4))
			if err := f.Reset([]float64{0}, []float64{5}, rng); err != nil {
				b.Fatal(err)
			}
			var z [1]float64
			k := 0
			b.ReportAllocs()
			b.ResetTimer()
			for i := 0; i < b.N; i++ {
				k++
				if k > steps {
					b.StopTimer()
					k = 1
					if err := f.Reset([]float64{0}, []float64{5}, rng); err != nil {
						b.Fatal(err)
					}
					b.StartTimer()
				}
				if err := f.Predict(k); err != nil {
					b.Fatal(err)
				}
				z[0] = zs[k]
				if err := f.Update(z[:], k); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(n), "ns/particle-step")
		})
	}
}

// BenchmarkPFGeneral times a step of the general (vector) path on the
// linear CV2D model (Nx = 4, Nz = 2).
func BenchmarkPFGeneral(b *testing.B) {
	m := filtertest.CV2D(0.5, 4)
	x0, p0 := filtertest.CV2DPrior()
	const steps = 200
	_, zs := filtertest.Simulate(m, x0, steps, rand.New(rand.NewPCG(1, 2)))
	for _, n := range []int{1000, 10000} {
		b.Run(fmt.Sprintf("problem=cv2d/particles=%d", n), func(b *testing.B) {
			f, err := filters.NewPF(m, filters.PFConfig{Particles: n})
			if err != nil {
				b.Fatal(err)
			}
			rng := rand.New(rand.NewPCG(3, 4))
			if err := f.Reset(x0, p0, rng); err != nil {
				b.Fatal(err)
			}
			k := 0
			b.ReportAllocs()
			b.ResetTimer()
			for i := 0; i < b.N; i++ {
				k++
				if k > steps {
					b.StopTimer()
					k = 1
					if err := f.Reset(x0, p0, rng); err != nil {
						b.Fatal(err)
					}
					b.StartTimer()
				}
				if err := f.Predict(k); err != nil {
					b.Fatal(err)
				}
				if err := f.Update(zs[k-1], k); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(n), "ns/particle-step")
		})
	}
}

// BenchmarkMonteCarlo times one Predict+Update step of every particle and
// ensemble filter (pf with each resampling scheme, apf, rpf, enkf) on UNGM
// (the scalar problem) and CV2D (Nx = 4, Nz = 2), resampling every step.
func BenchmarkMonteCarlo(b *testing.B) {
	ug := ungmModel()
	cv := filtertest.CV2D(0.5, 4)
	cx, cp := filtertest.CV2DPrior()
	const steps = 200
	_, uz := ungmSimulate(ug, 0, steps, rand.New(rand.NewPCG(1, 2)))
	uzs := make([][]float64, steps)
	for k := range uzs {
		uzs[k] = uz[k+1 : k+2]
	}
	_, czs := filtertest.Simulate(cv, cx, steps, rand.New(rand.NewPCG(1, 2)))
	problems := []struct {
		name   string
		m      *filters.Model
		x0, p0 []float64
		zs     [][]float64
	}{
		{"ungm", ug, []float64{0}, []float64{5}, uzs},
		{"cv2d", cv, cx, cp, czs},
	}
	type maker struct {
		name string
		mk   func(m *filters.Model, n int) (filters.Filter, error)
	}
	var makers []maker
	for _, s := range filters.ResamplingNames() {
		sc, _ := filters.ParseResampling(s)
		makers = append(makers, maker{"pf/resample=" + s, func(m *filters.Model, n int) (filters.Filter, error) {
			return filters.NewPF(m, filters.PFConfig{Particles: n, Resample: sc})
		}})
	}
	makers = append(makers,
		maker{"pf/roughening=0.2", func(m *filters.Model, n int) (filters.Filter, error) {
			return filters.NewPF(m, filters.PFConfig{Particles: n, Roughening: 0.2})
		}},
		maker{"apf", func(m *filters.Model, n int) (filters.Filter, error) {
			return filters.NewAPF(m, filters.APFConfig{Particles: n})
		}},
		maker{"rpf", func(m *filters.Model, n int) (filters.Filter, error) {
			return filters.NewRPF(m, filters.RPFConfig{Particles: n})
		}},
		maker{"enkf", func(m *filters.Model, n int) (filters.Filter, error) {
			return filters.NewEnKF(m, filters.EnKFConfig{Members: n})
		}},
	)
	for _, p := range problems {
		for _, mk := range makers {
			const n = 1000
			b.Run(fmt.Sprintf("problem=%s/filter=%s/particles=%d", p.name, mk.name, n), func(b *testing.B) {
				f, err := mk.mk(p.m, n)
				if err != nil {
					b.Fatal(err)
				}
				mcBenchSteps(b, f, p.x0, p.p0, p.zs, n)
			})
		}
	}
}

// mcBenchSteps times Predict+Update over the measurements zs, restarting
// from x0, p0 after the last, and reports ns per particle-step.
func mcBenchSteps(b *testing.B, f filters.Filter, x0, p0 []float64, zs [][]float64, n int) {
	rng := rand.New(rand.NewPCG(3, 4))
	if err := f.Reset(x0, p0, rng); err != nil {
		b.Fatal(err)
	}
	k := 0
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		k++
		if k > len(zs) {
			b.StopTimer()
			k = 1
			if err := f.Reset(x0, p0, rng); err != nil {
				b.Fatal(err)
			}
			b.StartTimer()
		}
		if err := f.Predict(k); err != nil {
			b.Fatal(err)
		}
		if err := f.Update(zs[k-1], k); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(n), "ns/particle-step")
}
