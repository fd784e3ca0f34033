package api

import (
	"math"
	"slices"
)

// appendJSONFloat appends x as encoding/json and goccy/go-json write a
// float64: the shortest decimal that reads back as x (and of those the
// closest to x), in the form strconv.AppendFloat gives with 'f', or with
// 'e' below 1e-6 and from 1e21, the exponent then without a leading zero.
// A NaN or an infinity, which JSON cannot hold, is written as 0 and turns
// *finite false. The answers' numbers (0, and 2^-6 <= |x| < 2^53) it
// writes itself, directly into the room b has, with no call on the way;
// the rest go to appendOther (strconv). Under WebAssembly a call, and a
// buffer of its own zeroed and copied, cost more than the digit search
// itself (README, Performance). Integers are written by their digits:
// every other integer of as many digits or fewer is at least 1 away and
// reads back as another float.
//
// The digits of a fraction come from the free-format algorithm of Steele
// and White ("How to print floating-point numbers accurately", 1990, in
// the form of Burger and Dybvig, "Printing floating-point numbers quickly
// and accurately", 1996) run in exact fixed-point integers, as every
// quantity fits in 64 bits in this range. Write x = m 2^e (m the 53-bit
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
// TestAppendJSONFloatDigits compares it with strconv over that range,
// TestAppendJSONFloat and FuzzAppendJSONFloat with the JSON encoders over
// every float64.
func appendJSONFloat(b []byte, x float64, finite *bool) []byte {
	if cap(b)-len(b) < 64 {
		b = slices.Grow(b, 64)
	}
	base := len(b)
	dst := (*[64]byte)(b[base : base+64])
	u := math.Float64bits(x)
	if i := uint64(x); float64(i) == x && i < 1000 && u>>63 == 0 {
		// 0 to 999, the answers' most frequent (flows, 1, 0), at once
		switch {
		case i < 10:
			dst[0] = byte('0' + i)
			return b[:base+1]
		case i < 100:
			dst[0], dst[1] = byte('0'+i/10), byte('0'+i%10)
			return b[:base+2]
		}
		dst[0], dst[1], dst[2] = byte('0'+i/100), byte('0'+i/10%10), byte('0'+i%10)
		return b[:base+3]
	}
	neg := int(u >> 63)
	if u<<1 == 0 { // -0 (0 is above)
		dst[0], dst[1] = '-', '0'
		return b[:base+2]
	}
	biased := int(u>>52) & 0x7ff
	e := biased - 1075
	s := 2 - e // fraction bits of x in units of 2^(e-2)
	if e > 0 || s > fracBits {
		return appendOther(b, x, finite) // from 2^53, below 2^-6 (subnormals included), not finite
	}
	// x = m 2^e with m = 2^52 + the fraction bits (a normal float)
	m := u&(1<<52-1) | 1<<52
	v := m << 2
	whole := v >> uint(s)
	// The whole part, right to left from its last digit. Below 2^32 its
	// divisions by 10 are multiplications; a 64-bit one is a division.
	n := 1
	for n < len(pow10) && whole >= pow10[n] {
		n++
	}
	p := neg + n // where the point goes
	dst[0] = '-'
	if whole < 1<<32 {
		for i, w := p-1, uint32(whole); i >= neg; i-- {
			dst[i&63] = byte('0' + w%10)
			w /= 10
		}
	} else {
		for i, w := p-1, whole; i >= neg; i-- {
			dst[i&63] = byte('0' + w%10)
			w /= 10
		}
	}
	// The fraction, moved to fracBits bits so that the loop shifts by
	// constants (a shift by a variable costs a test under WebAssembly).
	shift := uint(fracBits - s)
	r := (v & (1<<uint(s) - 1)) << shift
	if r == 0 {
		return b[:base+p] // an integer
	}
	below, above := uint64(2)<<shift, uint64(2)<<shift
	if m == 1<<52 && biased > 1 {
		below = 1 << shift
	}
	// incl is 1 when the halfway points read back as x (m even): a
	// distance within them is then "<= d", that is "< d + 1".
	incl := (m & 1) ^ 1
	// Go's WebAssembly code takes every branch through a dispatch on the
	// block number, so the loops below have one test per step, and the
	// digits are written without a bounds test (p + 21 < 64).
	dst[p&63] = '.'
	// r < one = 2^60, so 10 r fits in 64 bits; below and above are below
	// one until the loop ends (which it does by the 19th digit, when above
	// passes one: 2 10^k 2^shift > 2^60 for 10^k >= 2^(s-1)), so 10 times
	// them fits too. low (the truncation reads back as x) is r < below +
	// incl, and up (the next decimal up does) one - r < above + incl,
	// taken as the sign of differences that stay within +-2^60.
	j := p + 1
	if s >= chunkMinBits {
		// Nine digits in one step, when they do not stop the search (the
		// tests are monotone, see below). Here below and above are at
		// most 2^30, so 10^9 times them stays below 2^60, and r 10^9 is
		// taken exactly in two halves of 30 bits.
		const mask30 = 1<<30 - 1
		hi, lo := (r>>30)*1e9, (r&mask30)*1e9 // r 10^9 = hi 2^30 + lo
		c := hi + lo>>30
		f := (c&mask30)<<30 | lo&mask30 // r 10^9 mod 2^60
		below9, above9 := below*1e9, above*1e9
		low := (f - min(below9+incl, one)) >> 63
		up := (one - f - min(above9+incl, one+1)) >> 63
		if low|up == 0 {
			d := uint32(c >> 30) // the nine digits, below 10^9
			hi, lo := d/100000, d%100000
			dst[j&63], dst[(j+1)&63], dst[(j+2)&63], dst[(j+3)&63] = byte('0'+hi/1000), byte('0'+hi/100%10), byte('0'+hi/10%10), byte('0'+hi%10)
			dst[(j+4)&63], dst[(j+5)&63], dst[(j+6)&63], dst[(j+7)&63], dst[(j+8)&63] = byte('0'+lo/10000), byte('0'+lo/1000%10), byte('0'+lo/100%10), byte('0'+lo/10%10), byte('0'+lo%10)
			r, below, above = f, below9, above9
			j += 9
		}
	}
	if s <= pairBits {
		// Two digits a step while the second does not stop the search:
		// the tests are monotone (a truncation, or a next decimal up, that
		// reads back as x still does one digit later, scaled by 10), so
		// then the first does not either. The unit is 2^57 here, so that
		// 100 r fits; r, below and above are multiples of 2^(60-s) >= 8,
		// and go back to 2^60 exactly.
		const pairOne = 1 << pairBits
		r, below, above = r>>(fracBits-pairBits), below>>(fracBits-pairBits), above>>(fracBits-pairBits)
		for ; j < p+19; j += 2 {
			r2, below2, above2 := r*100, below*100, above*100
			f := r2 & (pairOne - 1)
			low := (f - min(below2+incl, pairOne)) >> 63
			up := (pairOne - f - min(above2+incl, pairOne+1)) >> 63
			if low|up != 0 {
				break // the digit loop below finds which of the two stops
			}
			dd := uint32(r2 >> pairBits)
			dst[j&63] = byte('0' + dd/10)
			dst[(j+1)&63] = byte('0' + dd%10)
			r, below, above = f, below2, above2
		}
		r, below, above = r<<(fracBits-pairBits), below<<(fracBits-pairBits), above<<(fracBits-pairBits)
	}
	for ; j < p+21; j++ {
		r *= 10
		below *= 10
		above *= 10
		dst[j&63] = byte('0' + r>>fracBits)
		r &= one - 1
		low := (r - min(below+incl, one)) >> 63
		up := (one - r - min(above+incl, one+1)) >> 63
		if low|up != 0 {
			if up == 1 && (low == 0 || 2*r > one || 2*r == one && dst[j&63]&1 == 1) {
				dst[j&63]++ // nearer up, or a tie, which goes to the even digit
			}
			if dst[j&63] > '9' {
				return appendOther(b, x, finite) // a carry: cannot happen, see above; left to strconv
			}
			return b[:base+j+1]
		}
	}
	return appendOther(b, x, finite)
}

// pow10 holds the powers of ten that appendJSONFloat counts a whole part's
// digits with (below 2^53 < 10^16).
var pow10 = [...]uint64{1, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15}

// fracBits is the fixed point of appendJSONFloat's loops, and one
// its unit.
const (
	fracBits = 60
	one      = 1 << fracBits
	// pairBits is the fixed point of its loop of two digits a step.
	pairBits = 57
	// chunkMinBits is the fewest fraction bits (s) for which its first
	// step takes nine digits: below and above are then at most 2^30.
	chunkMinBits = 31
)
