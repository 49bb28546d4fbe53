package recorded

import (
	"math"
	"math/rand/v2"
	"strconv"
	"testing"
)

// TestParseValueMatchesStrconv checks the fast path of parseValue bit for
// bit against strconv.ParseFloat of Go's standard library (correctly
// rounded, IEEE 754 round half to even) on fields printed as sensor logs
// print them.
func TestParseValueMatchesStrconv(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	var fields []string
	for range 20000 {
		v := rng.NormFloat64() * math.Pow(10, float64(rng.IntN(12)-6))
		fields = append(fields,
			strconv.FormatFloat(v, 'f', rng.IntN(12), 64),
			strconv.FormatFloat(v, 'g', -1, 64),
			strconv.FormatFloat(float64(float32(v)), 'g', -1, 32),
			strconv.FormatFloat(v, 'f', -1, 64))
	}
	fields = append(fields, "0", "-0", "+0", "0.0", "-0.000", "9007199254740991", "9007199254740992",
		"9007199254740993", "900719925474099.3", "1234567890123456", "0.1", "0.3", "2.2250738585072014",
		"1.7976931348623157", "0.0000000000000000000001", "123.", ".5", "-.5", "00000000000000001.5",
		"0.00000000000000000000001", "6.866455E-4", "1e5", "NaN", "nan")
	for _, f := range fields {
		want, werr := strconv.ParseFloat(f, 64)
		got, err := parseValue([]byte(f))
		if math.IsNaN(want) {
			if err != nil || !math.IsNaN(got) {
				t.Errorf("%q: %v %v, want NaN", f, got, err)
			}
			continue
		}
		if (err != nil) != (werr != nil) || math.Float64bits(got) != math.Float64bits(want) {
			t.Errorf("%q: %v (%x) %v; strconv %v (%x) %v", f, got, math.Float64bits(got), err, want, math.Float64bits(want), werr)
		}
	}
	for _, bad := range []string{"-", "+", ".", "1.2.3", "1-", "--1", "0x", "abc", "1e", "Inf", "-inf"} {
		if v, err := parseValue([]byte(bad)); err == nil {
			t.Errorf("%q parsed as %v", bad, v)
		}
	}
}

func TestParseValueNoAllocs(t *testing.T) {
	fields := [][]byte{[]byte("-0.0042603487041181585"), []byte("9.860071125378163"), []byte("-57.580566"), []byte("6.866455E-4"), []byte("")}
	if n := testing.AllocsPerRun(100, func() {
		for _, f := range fields {
			parseValue(f)
		}
	}); n != 0 {
		t.Errorf("%v allocations per run, want 0", n)
	}
}
