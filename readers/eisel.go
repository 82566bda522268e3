package readers

import (
	"math"
	"math/big"
	"math/bits"
	"sync"
)

// The Eisel-Lemire algorithm (D. Lemire, "Number Parsing at a Gigabyte per Second",
// Software: Practice and Experience 51(8), 2021) turns a decimal mantissa of up to 19
// digits and a power of ten into the correctly rounded float64 with one or two 64 x 64
// bit multiplications by a 128-bit approximation of the power of ten, and reports the
// rare inputs it cannot decide, which then go to strconv.

const (
	elMinExp10 = -348
	elMaxExp10 = 347
)

var (
	elOnce  sync.Once
	elTable [elMaxExp10 - elMinExp10 + 1][2]uint64 // {low, high} 64 bits
)

// elPowers fills the table: for each q, the top 128 bits of 10^q, rounded down, so
// that 2^127 <= value < 2^128. The exponent that normalises them must be the one the
// algorithm computes, floor(217706 q / 2^16); the init checks that it is.
func elPowers() {
	ten := big.NewInt(10)
	mask := new(big.Int).SetUint64(math.MaxUint64)
	for q := elMinExp10; q <= elMaxExp10; q++ {
		p := new(big.Int).Exp(ten, big.NewInt(int64(abs(q))), nil)
		var e int
		t := new(big.Int)
		if q >= 0 {
			e = p.BitLen() - 1
			if 127-e >= 0 {
				t.Lsh(p, uint(127-e))
			} else {
				t.Rsh(p, uint(e-127))
			}
		} else {
			e = -p.BitLen() // 10^|q| is never a power of two
			t.Lsh(big.NewInt(1), uint(127-e))
			t.Quo(t, p)
		}
		if e != (217706*q)>>16 {
			panic("readers: power-of-ten exponent formula disagrees with the table")
		}
		lo := new(big.Int).And(t, mask).Uint64()
		hi := new(big.Int).Rsh(t, 64).Uint64()
		elTable[q-elMinExp10] = [2]uint64{lo, hi}
	}
}

func abs(x int) int {
	if x < 0 {
		return -x
	}
	return x
}

// eiselLemire returns man x 10^exp10 correctly rounded, or ok false when it cannot
// decide (then strconv must).
func eiselLemire(man uint64, exp10 int, neg bool) (float64, bool) {
	if man == 0 {
		if neg {
			return math.Copysign(0, -1), true
		}
		return 0, true
	}
	if exp10 < elMinExp10 || exp10 > elMaxExp10 {
		return 0, false
	}
	elOnce.Do(elPowers)
	clz := bits.LeadingZeros64(man)
	man <<= uint(clz)
	retExp2 := uint64((217706*exp10)>>16+64+1023) - uint64(clz)
	pw := &elTable[exp10-elMinExp10]
	xHi, xLo := bits.Mul64(man, pw[1])
	// The table is rounded down: the true product lies within man of this one in the
	// low word. When that could carry into the bits that decide rounding, widen.
	if xHi&0x1FF == 0x1FF && xLo+man < man {
		yHi, yLo := bits.Mul64(man, pw[0])
		mHi, mLo := xHi, xLo+yHi
		if mLo < xLo {
			mHi++
		}
		if mHi&0x1FF == 0x1FF && mLo+1 == 0 && yLo+man < man {
			return 0, false
		}
		xHi, xLo = mHi, mLo
	}
	msb := xHi >> 63
	mant := xHi >> (msb + 9)
	retExp2 -= 1 ^ msb
	// exactly half-way between two floats: let strconv decide
	if xLo == 0 && xHi&0x1FF == 0 && mant&3 == 1 {
		return 0, false
	}
	mant += mant & 1
	mant >>= 1
	if mant>>53 > 0 {
		mant >>= 1
		retExp2++
	}
	// subnormal, zero, infinite or NaN territory: not ours
	if retExp2-1 >= 0x7FF-1 {
		return 0, false
	}
	b := retExp2<<52 | mant&(1<<52-1)
	if neg {
		b |= 1 << 63
	}
	return math.Float64frombits(b), true
}
