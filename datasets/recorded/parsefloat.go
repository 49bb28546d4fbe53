package recorded

import (
	"encoding/binary"
	"math"
	"math/big"
	"math/bits"
)

// parseFloat parses the common decimal forms, [+-]digits[.digits] with an
// optional exponent ([eE][+-]digits), of at most 19 significant digits, in
// one pass and without allocating. It returns the float64 nearest the
// decimal (IEEE 754 round half to even), bit for bit what
// strconv.ParseFloat(string(b), 64) returns, or false when the field has
// another form or the fast paths below cannot guarantee that result; the
// caller then hands the field to strconv.ParseFloat, which also reports
// the errors. It never returns an infinity.
func parseFloat(b []byte) (float64, bool) {
	v, n, ok := parseFloatPrefix(b)
	return v, ok && n == len(b)
}

// parseFloatPrefix is parseFloat for the number at the start of b: it
// also returns the bytes the number takes, and stops at the first byte
// that cannot continue it. A number cut short ("1e", "1e+") is refused.
func parseFloatPrefix(b []byte) (float64, int, bool) {
	i, neg := 0, false
	if len(b) > 0 && (b[0] == '-' || b[0] == '+') {
		neg = b[0] == '-'
		i = 1
	}
	// The digits go into man without the point, leading zeros skipped;
	// sig counts the rest, exp the digits after the point.
	var man uint64 // wraps past 19 digits, which sig then refuses
	sig, exp := 0, 0
	first := i
	for i < len(b) && b[i] == '0' {
		i++
	}
	j := i
	for ; i < len(b) && b[i]-'0' <= 9; i++ {
		man = man*10 + uint64(b[i]-'0')
	}
	sig = i - j
	digits := i > first
	if i < len(b) && b[i] == '.' {
		i++
		f := i
		if man == 0 {
			for i < len(b) && b[i] == '0' {
				i++
			}
		}
		j = i
		for len(b)-i >= 8 {
			v := binary.LittleEndian.Uint64(b[i:])
			if !eightDigits(v) {
				break
			}
			man = man*1e8 + uint64(parseEight(v))
			i += 8
		}
		for ; i < len(b) && b[i]-'0' <= 9; i++ {
			man = man*10 + uint64(b[i]-'0')
		}
		sig += i - j
		exp = f - i
		digits = digits || i > f
	}
	if !digits || sig > 19 {
		return 0, 0, false
	}
	if i < len(b) && b[i]|0x20 == 'e' {
		i++
		eneg := false
		if i < len(b) && (b[i] == '+' || b[i] == '-') {
			eneg = b[i] == '-'
			i++
		}
		j = i
		e := 0
		for ; i < len(b) && b[i]-'0' <= 9; i++ {
			if e < 10000 { // beyond any float64; the table range check rejects it
				e = e*10 + int(b[i]-'0')
			}
		}
		if i == j {
			return 0, 0, false
		}
		if eneg {
			e = -e
		}
		exp += e
	}
	if man == 0 {
		if neg {
			return math.Copysign(0, -1), i, true
		}
		return 0, i, true
	}
	// Clinger's fast path (Clinger 1990, "How to read floating point
	// numbers accurately", PLDI): man below 2^53 and 10^|exp|
	// with |exp| <= 22 are exact float64 values, so one IEEE multiply or
	// divide gives the correctly rounded result.
	if man < 1<<53 && exp >= -22 && exp <= 22 {
		v := float64(man)
		if exp < 0 {
			v /= exactPow10[-exp]
		} else {
			v *= exactPow10[exp]
		}
		if neg {
			v = -v
		}
		return v, i, true
	}
	v, ok := eiselLemire(man, exp, neg)
	return v, i, ok
}

// eiselLemire returns man·10^exp10 correctly rounded, or false when the
// 128-bit approximation of the power of ten leaves the rounding in doubt,
// the result is subnormal or infinite, or exp10 is outside the table. It
// is the algorithm of Lemire 2021, "Number parsing at a gigabyte per
// second", Software: Practice and Experience 51(8) (after Eisel), with
// powers of ten rounded down: the 192-bit product w·T of the normalised
// mantissa w and the power T falls short of the exact one by less than w
// units of its last bit. A carry from that shortfall can reach the 54 bits
// kept (53 and the rounding bit) only where the bits below them are all
// ones, and the product can look like an exact tie only where they are all
// zeros; both cases are refused. man must not be 0.
func eiselLemire(man uint64, exp10 int, neg bool) (float64, bool) {
	if exp10 < pow10Min || exp10 > pow10Max {
		return 0, false
	}
	t := &pow10Table[exp10-pow10Min]
	clz := bits.LeadingZeros64(man)
	w := man << clz // normalised: top bit set
	// man·10^exp10 = w·T·2^(log2Pow10(exp10) - 127 - clz); the biased
	// exponent of the result when the product's top bit is bit 191.
	exp2 := uint64(log2Pow10(exp10)+64+1023) - uint64(clz)

	xHi, xLo := bits.Mul64(w, t[0])
	if xHi&0x1FF == 0x1FF && xLo+w < xLo {
		// The upper 128 bits may still carry: add the product with the
		// low 64 bits of T.
		yHi, yLo := bits.Mul64(w, t[1])
		mHi, mLo := xHi, xLo+yHi
		if mLo < xLo {
			mHi++
		}
		if mHi&0x1FF == 0x1FF && mLo+1 == 0 && yLo+w < yLo {
			return 0, false
		}
		xHi, xLo = mHi, mLo
	}
	msb := xHi >> 63
	m54 := xHi >> (msb + 9) // 53 bits and the rounding bit
	exp2 -= 1 ^ msb
	if xLo == 0 && xHi&0x1FF == 0 && m54&3 == 1 {
		return 0, false // looks like a tie; the true value may lie above it
	}
	m := (m54 + m54&1) >> 1
	if m>>53 != 0 {
		m >>= 1
		exp2++
	}
	if exp2-1 >= 0x7FF-1 { // exp2 <= 0 (subnormal) or >= 0x7FF (infinite)
		return 0, false
	}
	f := exp2<<52 | m&(1<<52-1)
	if neg {
		f |= 1 << 63
	}
	return math.Float64frombits(f), true
}

// The range of exponents of pow10Table: every 19-digit decimal of a
// normal float64 has its exponent in it.
const (
	pow10Min = -342
	pow10Max = 308
)

// log2Pow10 is floor(log2(10^e)) for the exponents of the table (checked
// when it is built): 217706/2^16 is log2(10) to within 2e-6.
func log2Pow10(e int) int { return (217706 * e) >> 16 }

// pow10Table holds, for each e in [pow10Min, pow10Max], 10^e rounded down
// to 128 bits with the top bit set, {high 64 bits, low 64 bits}:
// 10^e = (hi·2^64 + lo + δ)·2^(log2Pow10(e) - 127) with 0 <= δ < 1.
// Built with math/big when the program starts (about 0.3 ms).
var pow10Table = makePow10Table()

func makePow10Table() *[pow10Max - pow10Min + 1][2]uint64 {
	var t [pow10Max - pow10Min + 1][2]uint64
	ten := big.NewInt(10)
	p := big.NewInt(1) // 10^|e|
	r, q := new(big.Int), new(big.Int)
	for n := 0; n <= max(-pow10Min, pow10Max); n++ {
		b := p.BitLen()
		if n <= pow10Max { // 10^n
			if b > 128 {
				r.Rsh(p, uint(b-128))
			} else {
				r.Lsh(p, uint(128-b))
			}
			set(&t[n-pow10Min], r, b-1, n)
		}
		if n > 0 && -n >= pow10Min {
			// 10^-n = 1/p with p not a power of two: floor(2^(127+b)/p)
			// lies in [2^127, 2^128), and floor(log2(10^-n)) = -b.
			r.Quo(q.Lsh(q.SetInt64(1), uint(127+b)), p)
			set(&t[-n-pow10Min], r, -b, -n)
		}
		p.Mul(p, ten)
	}
	return &t
}

// set stores r, of 128 bits, in dst, checking that e2, floor(log2(10^e)),
// is log2Pow10(e).
func set(dst *[2]uint64, r *big.Int, e2, e int) {
	if r.BitLen() != 128 || e2 != log2Pow10(e) {
		panic("recorded: power of ten table")
	}
	lo := new(big.Int).And(r, new(big.Int).SetUint64(math.MaxUint64))
	dst[0], dst[1] = new(big.Int).Rsh(r, 64).Uint64(), lo.Uint64()
}

// exactPow10 are the powers of ten that float64 holds exactly.
var exactPow10 = [...]float64{1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11,
	1e12, 1e13, 1e14, 1e15, 1e16, 1e17, 1e18, 1e19, 1e20, 1e21, 1e22}

// eightDigits reports whether the eight bytes of v, loaded little-endian,
// are all ASCII digits: each byte's high nibble is 3 and adding 6 to it
// does not carry into the high nibble.
func eightDigits(v uint64) bool {
	return (v&0xF0F0F0F0F0F0F0F0)|((v+0x0606060606060606)&0xF0F0F0F0F0F0F0F0)>>4 == 0x3333333333333333
}

// parseEight returns the value of eight ASCII digits loaded little-endian
// into v, the first digit in the lowest byte: pairs, then fours, then the
// eight are combined with three multiplications.
func parseEight(v uint64) uint32 {
	v -= 0x3030303030303030
	v = v*10 + v>>8 // each even byte: its pair's value, 0..99
	const mask = 0x000000FF000000FF
	v = ((v&mask)*(100+1000000<<32) + (v>>16&mask)*(1+10000<<32)) >> 32
	return uint32(v)
}
