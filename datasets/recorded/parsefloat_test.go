package recorded

import (
	"bufio"
	"math"
	"math/big"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// The reference throughout is strconv.ParseFloat of Go's standard library,
// which returns the float64 nearest the decimal, ties to even (IEEE
// 754-2019, section 5.12.2, and the strconv documentation). parseFloat must
// agree with it bit for bit whenever it accepts a field.

// checkParseFloat reports a field parseFloat accepts with a result other
// than strconv.ParseFloat's, or that strconv rejects.
func checkParseFloat(t testing.TB, s string) (accepted bool) {
	t.Helper()
	got, ok := parseFloat([]byte(s))
	if !ok {
		return false
	}
	want, err := strconv.ParseFloat(s, 64)
	if err != nil {
		t.Errorf("%q: parseFloat gives %v; strconv rejects it: %v", s, got, err)
	} else if math.Float64bits(got) != math.Float64bits(want) {
		t.Errorf("%q: parseFloat %v (%#016x), strconv %v (%#016x)", s, got, math.Float64bits(got), want, math.Float64bits(want))
	}
	return true
}

// TestParseFloatRandom compares random values printed in the forms loggers
// use: shortest round trip of a float64 (as Python's repr and Go's 'g', -1
// print them) and of a float32, fixed decimals, and exponents.
func TestParseFloatRandom(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	accepted, total := 0, 0
	for range 200000 {
		var v float64
		switch rng.IntN(3) {
		case 0: // sensor-like magnitudes
			v = rng.NormFloat64() * math.Pow(10, float64(rng.IntN(16)-8))
		case 1: // any normal float64
			v = math.Float64frombits(rng.Uint64() &^ (1 << 63))
			if math.IsNaN(v) || math.IsInf(v, 0) {
				continue
			}
		case 2: // integers and near powers of two, where ties live
			v = float64(rng.Uint64N(1<<54)) * math.Pow(2, float64(rng.IntN(40)-20))
		}
		if rng.IntN(2) == 0 {
			v = -v
		}
		for _, s := range []string{
			strconv.FormatFloat(v, 'g', -1, 64),
			strconv.FormatFloat(v, 'e', -1, 64),
			strconv.FormatFloat(v, 'E', rng.IntN(19), 64),
			strconv.FormatFloat(float64(float32(v)), 'g', -1, 32),
			strconv.FormatFloat(v, 'f', rng.IntN(20), 64),
			strconv.FormatFloat(v, 'g', 17, 64),
			strconv.FormatFloat(v, 'g', 19, 64),
		} {
			total++
			if checkParseFloat(t, s) {
				accepted++
			}
		}
	}
	// Nearly every field of these forms should take a fast path; the share
	// is what the speed rests on, not a correctness matter (common
	// practice, no source).
	if accepted < total*9/10 {
		t.Errorf("fast paths took %d of %d fields, want 90 %% or more", accepted, total)
	}
}

// TestParseFloatRandomDigits compares random digit strings of 1 to 19
// significant digits with random exponents, including the strings just
// either side of a halfway point between two float64 values.
func TestParseFloatRandomDigits(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 8))
	for range 200000 {
		n := 1 + rng.IntN(19)
		var sb strings.Builder
		if rng.IntN(2) == 0 {
			sb.WriteByte('-')
		}
		sb.WriteByte(byte('1' + rng.IntN(9)))
		for range n - 1 {
			sb.WriteByte(byte('0' + rng.IntN(10)))
		}
		sb.WriteString("e")
		sb.WriteString(strconv.Itoa(rng.IntN(700) - 350))
		checkParseFloat(t, sb.String())
	}
	// Halfway points: the exact midpoint m+½ ulp of random float64 values,
	// written with 19 and with all its digits (math/big gives the exact
	// decimal), and one unit of the last digit either side of it.
	half := new(big.Float).SetPrec(2000)
	for range 10000 {
		v := math.Float64frombits(rng.Uint64N(0x7FE0000000000000) + 1<<52)
		next := math.Nextafter(v, math.Inf(1))
		half.SetFloat64(v)
		half.Add(half, new(big.Float).SetFloat64(next))
		half.Quo(half, big.NewFloat(2))
		for _, s := range []string{half.Text('e', 18), half.Text('e', -1), half.Text('e', 15)} {
			checkParseFloat(t, s)
			mant, exp, _ := strings.Cut(s, "e")
			digits := strings.Replace(mant, ".", "", 1)
			if len(digits) > 19 {
				continue
			}
			d, _ := strconv.ParseUint(digits, 10, 64)
			e, _ := strconv.Atoi(exp)
			e -= len(digits) - 1
			checkParseFloat(t, strconv.FormatUint(d-1, 10)+"e"+strconv.Itoa(e))
			checkParseFloat(t, strconv.FormatUint(d+1, 10)+"e"+strconv.Itoa(e))
		}
	}
}

// TestParseFloatEdges compares hand-picked fields: signs, zeros, the
// limits of the exact-integer and exact-power paths, the float64 limits
// (IEEE 754 binary64: largest 1.7976931348623157e308, smallest normal
// 2.2250738585072014e-308, smallest subnormal 5e-324), halfway cases of the
// 2^53 boundary, and forms parseFloat must leave to strconv.
func TestParseFloatEdges(t *testing.T) {
	for _, s := range []string{
		"0", "-0", "+0", "0.0", "-0.000", "0e0", "-0e-400", "0e99999", "000", ".0", "0.",
		"1", "-1", "+1", "1.", ".5", "-.5", "5e-1", "1E5", "1e+5", "1e-05", "1e0022", "1e22", "1e23",
		"9007199254740991", "9007199254740992", "9007199254740993", "9007199254740994", "9007199254740995",
		"900719925474099.3", "1234567890123456", "12345678901234567890", "1844674407370955161",
		"9999999999999999999", "0.1", "0.2", "0.3", "123456789e-22", "123456789e22", "1e-22", "1e-23",
		"2.2250738585072014e-308", "2.2250738585072011e-308", "4.9406564584124654e-324", "5e-324",
		"1.7976931348623157e308", "1.7976931348623158e308", "1.7976931348623159e308", "1e308", "1e309",
		"0.0000000000000000000001", "00000000000000001.5", "0.00000000000000000000001",
		"6.866455E-4", "-57.580566", "9.860071125378163", "-0.0042603487041181585",
		"0.0031956978604016175", "15.40389368029598", "-41.2070351993747",
		"1.00000000000000011102230246251565404236316680908203125", // 1 + 2^-53, a tie
		"1.0000000000000001110223024625156540423631668090820312", "1.0000000000000001110223024625156541",
		"7.2057594037927933e16", "72057594037927933", "72057594037927935",
		"1e-342", "1e-343", "1e308", "1.5e-5000", "1.5e5000",
		// not for the fast path: strconv decides
		"", "-", "+", ".", "e5", "1e", "1e+", "1e-", "1.2.3", "1-", "--1", "+-1", "0x1p-2", "1_000",
		"inf", "-Inf", "infinity", "NaN", "nan", "1e5x", "1 ", " 1", "1,5", "１",
		// a byte just outside '0'..'9' inside a run of eight fraction digits
		"0.1234567:", "0.123456/8", "0.:2345678", "0.12345678/", "0.1234567\xff", "0.12345678901234:6",
	} {
		checkParseFloat(t, s)
	}
	for _, s := range []string{"", "-", ".", "e5", "1e", "1e+", "1.2.3", "0x1p-2", "1_000", "inf", "NaN", "1e5x", " 1",
		"0.1234567:", "0.123456/8", "0.12345678/", "0.1234567\xff"} {
		if v, ok := parseFloat([]byte(s)); ok {
			t.Errorf("%q: parseFloat accepted it as %v; it must go to strconv", s, v)
		}
	}
}

// TestParseFloatBROAD compares every value of the BROAD sample, printed in
// shortest round-trip form by Python's repr (the sample's SOURCE.md; Laidig
// et al. 2021, "BROAD - A Benchmark for Robust Inertial Orientation
// Estimation", Data 6(7):72).
func TestParseFloatBROAD(t *testing.T) {
	dir := broadDir(t)
	for _, name := range []string{"imu.csv", "groundtruth.csv"} {
		f, err := os.Open(filepath.Join(dir, name))
		if err != nil {
			t.Fatal(err)
		}
		sc := bufio.NewScanner(f)
		sc.Scan() // the header
		n, fast := 0, 0
		for sc.Scan() {
			for _, field := range strings.Split(sc.Text(), ",") {
				n++
				if checkParseFloat(t, field) {
					fast++
				}
			}
		}
		f.Close()
		if err := sc.Err(); err != nil {
			t.Fatal(err)
		}
		if n == 0 || fast < n*99/100 {
			t.Errorf("%s: fast paths took %d of %d fields, want nearly all", name, fast, n)
		}
	}
}

// TestPow10Table checks the table against math/big's exact powers of ten:
// each entry T satisfies T·2^k <= 10^e < (T+1)·2^k with k =
// log2Pow10(e) - 127, and T has its top bit set.
func TestPow10Table(t *testing.T) {
	for e := pow10Min; e <= pow10Max; e++ {
		hi, lo := pow10Table[e-pow10Min][0], pow10Table[e-pow10Min][1]
		if hi>>63 != 1 {
			t.Fatalf("10^%d: top bit clear", e)
		}
		tm := new(big.Int).Lsh(new(big.Int).SetUint64(hi), 64)
		tm.Or(tm, new(big.Int).SetUint64(lo))
		k := log2Pow10(e) - 127
		// Compare T·2^k and (T+1)·2^k with 10^e as exact rationals.
		lower := new(big.Rat).SetInt(tm)
		upper := new(big.Rat).SetInt(new(big.Int).Add(tm, big.NewInt(1)))
		scale := new(big.Rat).SetInt(new(big.Int).Lsh(big.NewInt(1), uint(abs(k))))
		if k < 0 {
			scale.Inv(scale)
		}
		lower.Mul(lower, scale)
		upper.Mul(upper, scale)
		p := new(big.Rat).SetInt(new(big.Int).Exp(big.NewInt(10), big.NewInt(int64(abs(e))), nil))
		if e < 0 {
			p.Inv(p)
		}
		if lower.Cmp(p) > 0 || upper.Cmp(p) <= 0 {
			t.Fatalf("10^%d not in [T, T+1)·2^%d", e, k)
		}
	}
}

func TestParseFloatNoAllocs(t *testing.T) {
	fields := [][]byte{[]byte("-0.0042603487041181585"), []byte("9.860071125378163"), []byte("6.866455E-4")}
	if n := testing.AllocsPerRun(100, func() {
		for _, f := range fields {
			parseFloat(f)
		}
	}); n != 0 {
		t.Errorf("%v allocations per run, want 0", n)
	}
}

// FuzzParseFloat compares parseFloat with strconv.ParseFloat on any input.
func FuzzParseFloat(f *testing.F) {
	for _, s := range []string{"0", "-0.0042603487041181585", "9.860071125378163", "6.866455E-4", "1e23",
		"9007199254740993", "2.2250738585072011e-308", "1.7976931348623159e308", ".5", "1e", "nan",
		"0.1234567:", "-0.12345678901234567e-5"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		checkParseFloat(t, s)
	})
}

func abs(e int) int {
	if e < 0 {
		return -e
	}
	return e
}

// BenchmarkParseFloat parses fields of a row in turn: values of a sensor
// log in shortest round-trip form of a float64 or of a float32.
func BenchmarkParseFloat(b *testing.B) {
	for _, digits := range []string{"float64", "float32"} {
		rng := rand.New(rand.NewPCG(1, 2))
		var line []byte
		for range 1000 {
			v := rng.NormFloat64() * 10
			if digits == "float32" {
				line = strconv.AppendFloat(line, float64(float32(v)), 'g', -1, 32)
			} else {
				line = strconv.AppendFloat(line, v, 'g', -1, 64)
			}
			line = append(line, ',')
		}
		b.Run("digits="+digits, func(b *testing.B) {
			b.ReportAllocs()
			s := 0.0
			for range b.N {
				for rest := line; len(rest) > 0; {
					v, n, ok := parseFloatPrefix(rest)
					if !ok {
						b.Fatalf("%.30q refused", rest)
					}
					s += v
					rest = rest[n+1:]
				}
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/1000, "ns/field")
			if s == 1 {
				b.Log(s)
			}
		})
	}
}
