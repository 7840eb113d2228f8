package cohort

import (
	"math"
	"strconv"
)

// pow10 holds the powers of ten that float64 represents exactly.
var pow10 = [...]float64{1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9,
	1e10, 1e11, 1e12, 1e13, 1e14, 1e15, 1e16, 1e17, 1e18, 1e19, 1e20, 1e21, 1e22}

// parseFloat parses a plain decimal number: an optional sign, digits with
// at most one decimal point (dec is '.' or ','), and an optional exponent.
// It accepts nothing else: no infinities, NaN, hexadecimal or underscores.
//
// Short inputs take Clinger's exact fast path (a mantissa below 2^53
// scaled by an exactly representable power of ten gives the correctly
// rounded result with one IEEE operation; Clinger 1990, "How to read
// floating point numbers accurately"); anything else goes to
// strconv.ParseFloat, so every result is correctly rounded.
func parseFloat(s []byte, dec byte) (float64, bool) {
	i, n := 0, len(s)
	if n == 0 {
		return 0, false
	}
	neg := false
	if c := s[0]; c == '+' || c == '-' {
		neg = c == '-'
		i++
	}
	// Indexed loops, not ranges over re-sliced input: these two loops
	// are most of a CSV load's instructions.
	var mant uint64
	start := i
	for i < n && s[i]-'0' <= 9 {
		mant = mant*10 + uint64(s[i]-'0')
		i++
	}
	digits := i - start
	exp := 0
	if i < n && s[i] == dec {
		i++
		start = i
		for i < n && s[i]-'0' <= 9 {
			mant = mant*10 + uint64(s[i]-'0')
			i++
		}
		exp = start - i
		digits += i - start
	}
	if digits == 0 {
		return 0, false
	}
	if i < n {
		if s[i] != 'e' && s[i] != 'E' {
			return 0, false
		}
		i++
		eneg := false
		if i < n && (s[i] == '+' || s[i] == '-') {
			eneg = s[i] == '-'
			i++
		}
		if i == n {
			return 0, false
		}
		e := 0
		for ; i < n; i++ {
			c := s[i] - '0'
			if c > 9 {
				return 0, false
			}
			if e < 100000 {
				e = e*10 + int(c)
			}
		}
		if eneg {
			e = -e
		}
		exp += e
	}
	// Up to 19 digits cannot overflow the mantissa; longer ones (leading
	// zeros included) take the slow path.
	if digits <= 19 && mant < 1<<53 && exp >= -22 && exp <= 22 {
		f := float64(mant)
		if exp < 0 {
			f /= pow10[-exp]
		} else {
			f *= pow10[exp]
		}
		if neg {
			f = -f
		}
		return f, true
	}
	return parseSlow(s, dec)
}

// parseSlow hands a validated decimal string to strconv.ParseFloat.
func parseSlow(s []byte, dec byte) (float64, bool) {
	var buf [64]byte
	t := buf[:0]
	for _, c := range s {
		if c == dec {
			c = '.'
		}
		t = append(t, c)
	}
	f, err := strconv.ParseFloat(string(t), 64)
	if err != nil || math.IsInf(f, 0) || math.IsNaN(f) {
		return 0, false
	}
	return f, true
}
