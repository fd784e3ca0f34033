package api

import "math"

// appendShortestFraction appends x, a number that is not an integer, in
// strconv.AppendFloat(b, x, 'f', -1, 64)'s form (the shortest decimal that
// reads back as x, and of those the closest to x) when 2^-6 <= |x| < 2^53,
// and reports whether it did; for an integer, or outside that range, it
// appends nothing and returns false. Under WebAssembly it takes about half
// of strconv's time (README, Performance): strconv's search (Ryū) multiplies 64 by 128 bits,
// which that backend builds from 32-bit pieces, and branches much, which
// it takes through a dispatch on the block number.
//
// In this range every quantity fits in 64 bits, so the digits come from
// the free-format algorithm of Steele and White ("How to print
// floating-point numbers accurately", 1990, in the form of Burger and
// Dybvig, "Printing floating-point numbers quickly and accurately", 1996)
// run in exact fixed-point integers. Write x = m 2^e (m the 53-bit
// significand, e <= 0) and count in units of 2^(e-2): x is 4m, the
// halfway points to the neighbouring floats are 4m - 2 and 4m + 2 (4m - 1
// at a power of two, whose lower neighbour is twice as near), and a
// decimal reads back as x when it lies between them, the ends included
// when m is even (ties round to even). The integer part of every such
// decimal is that of x: x is no integer, and no integer lies between the
// halfway points (an integer below 2^53 reads back as itself). The
// fraction is generated digit by digit, with r the remainder of x, below
// and above the distances to the halfway points, all scaled by 10 per
// digit; the digits stop at the first position where the truncation (r
// within below) or the next decimal up (one unit - r within above) reads
// back as x, taking the nearer to x when both do, or the even digit when
// they are as near (as strconv does: 2^50 + 0.25 is written ...624.2). A
// carry (a 9 rounded up) cannot happen: the digit before would have
// stopped the loop, and the first digit cannot reach the next integer.
//
// TestShortestFraction and FuzzShortestFraction compare it with strconv,
// TestAppendJSONFloat and FuzzAppendJSONFloat appendJSONFloat with the
// JSON encoders.
func appendShortestFraction(b []byte, x float64) ([]byte, bool) {
	u := math.Float64bits(x)
	biased := int(u>>52) & 0x7ff
	// normal floats only: x = m 2^e with m = 2^52 + fraction bits
	if biased == 0 {
		return b, false
	}
	m := u&(1<<52-1) | 1<<52
	e := biased - 1075
	s := 2 - e // fraction bits of x in units of 2^(e-2)
	if e > 0 || s > fracBits {
		return b, false
	}
	v := m << 2
	whole := v >> uint(s)
	// The fraction, moved to fracBits bits so that the loop shifts by
	// constants (a shift by a variable costs a test under WebAssembly).
	shift := uint(fracBits - s)
	r := (v & (1<<uint(s) - 1)) << shift
	if r == 0 {
		return b, false // an integer: the caller's case
	}
	below, above := uint64(2)<<shift, uint64(2)<<shift
	if m == 1<<52 && biased > 1 {
		below = 1 << shift
	}
	// incl is 1 when the halfway points read back as x (m even): a
	// distance within them is then "<= d", that is "< d + 1".
	incl := (m & 1) ^ 1
	// Go's WebAssembly code takes every branch through a dispatch on the
	// block number, so the loop below has one test per digit, and the
	// digits go to a buffer indexed without a bounds test.
	var buf [64]byte
	i := appendWhole(&buf, whole, u>>63 != 0)
	buf[24] = '.'
	// r < one = 2^60, so 10 r fits in 64 bits; below and above are below
	// one until the loop ends (which it does by the 19th digit, when above
	// passes one: 2 10^k 2^shift > 2^60 for 10^k >= 2^(s-1)), so 10 times
	// them fits too. low (the truncation reads back as x) is r < below +
	// incl, and up (the next decimal up does) one - r < above + incl,
	// taken as the sign of differences that stay within +-2^60.
	j := 25
	if s <= pairBits {
		// Two digits a step while the second does not stop the search:
		// the tests are monotone (a truncation, or a next decimal up, that
		// reads back as x still does one digit later, scaled by 10), so
		// then the first does not either. The unit is 2^57 here, so that
		// 100 r fits; r, below and above are multiples of 2^(60-s) >= 8,
		// and go back to 2^60 exactly.
		const pairOne = 1 << pairBits
		r, below, above = r>>(fracBits-pairBits), below>>(fracBits-pairBits), above>>(fracBits-pairBits)
		for ; j < 43; j += 2 {
			r2, below2, above2 := r*100, below*100, above*100
			f := r2 & (pairOne - 1)
			low := (f - min(below2+incl, pairOne)) >> 63
			up := (pairOne - f - min(above2+incl, pairOne+1)) >> 63
			if low|up != 0 {
				break // the digit loop below finds which of the two stops
			}
			dd := uint32(r2 >> pairBits)
			buf[j&63] = byte('0' + dd/10)
			buf[(j+1)&63] = byte('0' + dd%10)
			r, below, above = f, below2, above2
		}
		r, below, above = r<<(fracBits-pairBits), below<<(fracBits-pairBits), above<<(fracBits-pairBits)
	}
	for ; j < 45; j++ {
		r *= 10
		below *= 10
		above *= 10
		buf[j&63] = byte('0' + r>>fracBits)
		r &= one - 1
		low := (r - min(below+incl, one)) >> 63
		up := (one - r - min(above+incl, one+1)) >> 63
		if low|up != 0 {
			if up == 1 && (low == 0 || 2*r > one || 2*r == one && buf[j&63]&1 == 1) {
				buf[j&63]++ // nearer up, or a tie, which goes to the even digit
			}
			if buf[j&63] > '9' {
				return b, false // a carry: cannot happen, see above; left to strconv
			}
			return append(b, buf[i:j+1]...), true
		}
	}
	return b, false
}

// appendWhole writes the integer part w (below 2^53) of a number, and its
// sign, into buf ending before buf[24], and returns where it starts.
func appendWhole(buf *[64]byte, w uint64, negative bool) int {
	i := 24
	for w >= 1<<32 {
		i--
		buf[i] = byte('0' + w%10)
		w /= 10
	}
	for v := uint32(w); ; {
		i--
		buf[i] = byte('0' + v%10)
		if v /= 10; v == 0 {
			break
		}
	}
	if negative {
		i--
		buf[i] = '-'
	}
	return i
}

// fracBits is the fixed point of appendShortestFraction's loop, and one
// its unit.
const (
	fracBits = 60
	one      = 1 << fracBits
	// pairBits is the fixed point of its loop of two digits a step.
	pairBits = 57
)
