package main

import (
	"errors"
	"fmt"
	"maps"
	"math"
	"slices"
	"strconv"
	"strings"

	"github.com/estbench/estbench/bench"
)

// sweepParam is the parameter --sweep-particles replaces: every filter of
// the catalogue that has it is a particle (or ensemble) filter.
const sweepParam = "particles"

// parseSweep reads "LO:HI" into particle counts from LO to HI. With steps 0
// the counts are LO, HI and the 1-2-5 values between them (1, 2 and 5
// times a power of ten, the usual "preferred number" series); with steps
// ≥ 2 they are steps values in geometric progression from LO to HI,
// rounded to integers, duplicates dropped. The counts increase.
func parseSweep(spec string, steps int) ([]int, error) {
	a, b, ok := strings.Cut(spec, ":")
	if !ok {
		return nil, fmt.Errorf("want LO:HI (e.g. 100:100000), got %q", spec)
	}
	lo, err1 := strconv.Atoi(strings.TrimSpace(a))
	hi, err2 := strconv.Atoi(strings.TrimSpace(b))
	switch {
	case err1 != nil || err2 != nil:
		return nil, fmt.Errorf("LO and HI must be integers, got %q", spec)
	case lo < 1 || hi < lo:
		return nil, fmt.Errorf("want 1 <= LO <= HI, got %q", spec)
	case steps == 1 || steps < 0:
		return nil, errors.New("--sweep-steps must be 0 (1-2-5 per decade) or at least 2")
	}
	var out []int
	add := func(n int) {
		if len(out) == 0 || n > out[len(out)-1] {
			out = append(out, n)
		}
	}
	if steps >= 2 {
		r := float64(hi) / float64(lo)
		for i := 0; i < steps; i++ {
			add(int(math.Round(float64(lo) * math.Pow(r, float64(i)/float64(steps-1)))))
		}
		return out, nil
	}
	add(lo)
	for dec := 1; dec <= hi; dec *= 10 {
		for _, m := range []int{1, 2, 5} {
			if v := m * dec; v > lo && v < hi {
				add(v)
			}
		}
		if dec > math.MaxInt/10 {
			break
		}
	}
	add(hi)
	return out, nil
}

// sweepParticles replaces, in place, every configuration of a filter with
// a particles parameter by one configuration per count, keeping its other
// values; configurations that become equal (a suite that already swept
// particles) are kept once. It returns the names of the filters swept, in
// suite order, or an error when there is none or a count is outside the
// parameter's range.
func sweepParticles(s *bench.Suite, counts []int) ([]string, error) {
	var out []bench.FilterConfig
	var swept []string
	seen := map[string]bool{}
	for _, fc := range s.Filters {
		p := paramOf(fc.Spec, sweepParam)
		if p == nil || p.Kind != bench.Int {
			out = append(out, fc)
			continue
		}
		if !slices.Contains(swept, fc.Spec.Name) {
			swept = append(swept, fc.Spec.Name)
		}
		for _, n := range counts {
			if (p.Min != 0 || p.Max != 0) && (float64(n) < p.Min || float64(n) > p.Max) {
				return nil, fmt.Errorf("%s: %s = %d is outside [%g, %g]", fc.Spec.Name, sweepParam, n, p.Min, p.Max)
			}
			v := maps.Clone(fc.Values)
			v[sweepParam] = bench.Value{Num: float64(n)}
			config := bench.ConfigString(fc.Spec.Params, v)
			if key := fc.Spec.Name + "\x00" + config; !seen[key] {
				seen[key] = true
				out = append(out, bench.FilterConfig{Spec: fc.Spec, Values: v, Config: config, Line: fc.Line})
			}
		}
	}
	if len(swept) == 0 {
		return nil, fmt.Errorf("the suite has no filter with a %s parameter", sweepParam)
	}
	s.Filters = out
	return swept, nil
}

func paramOf(spec *bench.FilterSpec, name string) *bench.Param {
	for i := range spec.Params {
		if spec.Params[i].Name == name {
			return &spec.Params[i]
		}
	}
	return nil
}
