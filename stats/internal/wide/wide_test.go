package wide

import (
	"math"
	"math/big"
	"math/rand/v2"
	"testing"
)

// The reference throughout is math/big, Go's general-purpose arbitrary-precision
// integers: every result is compared with the same operation on big.Int, reduced
// modulo 2^128 or 2^(64W) where the operation wraps.

const max64 = math.MaxUint64

func u128Big(a U128) *big.Int {
	x := new(big.Int).SetUint64(a.Hi)
	x.Lsh(x, 64)
	return x.Or(x, new(big.Int).SetUint64(a.Lo))
}

// mod returns x modulo 2^bits (x >= 0 or not) and whether x was outside [0, 2^bits).
func mod(x *big.Int, bits uint) (*big.Int, bool) {
	m := new(big.Int).Lsh(big.NewInt(1), bits)
	r := new(big.Int).Mod(x, m)
	return r, r.Cmp(x) != 0
}

// edges are the words at which carries and overflows happen.
var edges = []uint64{0, 1, 2, 3, 1 << 32, 1<<32 - 1, 1<<32 + 1, 1 << 63, 1<<63 - 1, 1<<63 + 1, max64 - 1, max64}

func edgeU128s() []U128 {
	var out []U128
	for _, hi := range edges {
		for _, lo := range edges {
			out = append(out, U128{hi, lo})
		}
	}
	return out
}

func randU128s(n int) []U128 {
	rng := rand.New(rand.NewPCG(128, 1))
	out := make([]U128, n)
	for i := range out {
		out[i] = U128{rng.Uint64() >> rng.IntN(64), rng.Uint64() >> rng.IntN(64)}
	}
	return out
}

func TestU128AgainstBig(t *testing.T) {
	vals := append(edgeU128s(), randU128s(200)...)
	for _, a := range vals {
		ab := u128Big(a)
		for _, b := range vals[:len(vals)/3+1] {
			bb := u128Big(b)
			if got, want := a.Less(b), ab.Cmp(bb) < 0; got != want {
				t.Fatalf("%v.Less(%v) = %v, math/big %v", a, b, got, want)
			}
			sum, of := a.Add(b)
			want, wantOf := mod(new(big.Int).Add(ab, bb), 128)
			if u128Big(sum).Cmp(want) != 0 || of != wantOf {
				t.Fatalf("%v.Add(%v) = %v, %v; math/big %v, overflow %v", a, b, sum, of, want, wantOf)
			}
		}
		for _, w := range edges {
			p, of := a.Mul64(w)
			want, wantOf := mod(new(big.Int).Mul(ab, new(big.Int).SetUint64(w)), 128)
			if u128Big(p).Cmp(want) != 0 || of != wantOf {
				t.Fatalf("%v.Mul64(%d) = %v, %v; math/big %v, overflow %v", a, w, p, of, want, wantOf)
			}
			for _, y := range edges {
				xy := new(big.Int).Mul(new(big.Int).SetUint64(w), new(big.Int).SetUint64(y))
				got := a.AddMul(w, y)
				want, _ := mod(new(big.Int).Add(ab, xy), 128)
				if u128Big(got).Cmp(want) != 0 {
					t.Fatalf("%v.AddMul(%d, %d) = %v, math/big %v", a, w, y, got, want)
				}
				if a == (U128{}) && u128Big(Mul(w, y)).Cmp(xy) != 0 {
					t.Fatalf("Mul(%d, %d) = %v, math/big %v", w, y, Mul(w, y), xy)
				}
			}
		}
	}
}

// TestU128Cases names the edges one by one: the carry from Lo into Hi, the wrap at
// 2^128, and the largest product that still fits.
func TestU128Cases(t *testing.T) {
	tests := []struct {
		name   string
		got    func() (U128, bool)
		want   U128
		wantOf bool
	}{
		{"add carries into Hi", func() (U128, bool) { return U128{0, max64}.Add(U128{0, 1}) }, U128{1, 0}, false},
		{"add wraps at 2^128", func() (U128, bool) { return U128{max64, max64}.Add(U128{0, 1}) }, U128{}, true},
		{"add of the largest", func() (U128, bool) { return U128{max64, max64}.Add(U128{max64, max64}) }, U128{max64, max64 - 1}, true},
		{"mul64 by zero", func() (U128, bool) { return U128{max64, max64}.Mul64(0) }, U128{}, false},
		{"mul64 carries into Hi", func() (U128, bool) { return U128{0, max64}.Mul64(max64) }, U128{max64 - 1, 1}, false},
		{"mul64 overflows from Hi", func() (U128, bool) { return U128{1, 0}.Mul64(1 << 63) }, U128{1 << 63, 0}, false},
		{"mul64 just overflows", func() (U128, bool) { return U128{1 << 63, 0}.Mul64(2) }, U128{}, true},
		{"mul64 overflows by the cross carry", func() (U128, bool) { return U128{max64, max64}.Mul64(2) }, U128{max64, max64 - 1}, true},
		{"addmul carries", func() (U128, bool) { return U128{0, max64}.AddMul(1, 1), false }, U128{1, 0}, false},
		{"addmul of the largest product", func() (U128, bool) { return U128{}.AddMul(max64, max64), false }, U128{max64 - 1, 1}, false},
		{"addmul wraps", func() (U128, bool) { return U128{max64, max64}.AddMul(2, 1), false }, U128{0, 1}, false},
		{"mul of the largest", func() (U128, bool) { return Mul(max64, max64), false }, U128{max64 - 1, 1}, false},
	}
	for _, tc := range tests {
		got, of := tc.got()
		if got != tc.want || of != tc.wantOf {
			t.Errorf("%s: %v, overflow %v; want %v, %v", tc.name, got, of, tc.want, tc.wantOf)
		}
	}
}

func wordsOf(rng *rand.Rand, n int) []uint64 {
	w := make([]uint64, n)
	for i := range w {
		switch rng.IntN(4) {
		case 0:
			w[i] = edges[rng.IntN(len(edges))]
		default:
			w[i] = rng.Uint64() >> rng.IntN(64)
		}
	}
	return w
}

func TestWordsAgainstBig(t *testing.T) {
	rng := rand.New(rand.NewPCG(64, 2))
	for n := 1; n <= 5; n++ {
		bitsN := uint(64 * n)
		cases := [][2][]uint64{
			{make([]uint64, n), make([]uint64, n)},
			{allOnes(n), oneWord(n)},        // carry through every word
			{make([]uint64, n), oneWord(n)}, // borrow through every word
			{allOnes(n), allOnes(n)},
		}
		for range 300 {
			cases = append(cases, [2][]uint64{wordsOf(rng, n), wordsOf(rng, n)})
		}
		for _, c := range cases {
			x, y := c[0], c[1]
			xb, yb := WordsToBig(x), WordsToBig(y)
			if back, ok := BigToWords(xb, n); !ok || CmpWords(back, x) != 0 {
				t.Fatalf("BigToWords(WordsToBig(%v)) = %v, %v", x, back, ok)
			}
			if got, want := CmpWords(x, y), xb.Cmp(yb); got != want {
				t.Fatalf("CmpWords(%v, %v) = %d, math/big %d", x, y, got, want)
			}
			d := append([]uint64(nil), x...)
			carry := AddWords(d, y)
			want, wrapped := mod(new(big.Int).Add(xb, yb), bitsN)
			if WordsToBig(d).Cmp(want) != 0 || (carry != 0) != wrapped {
				t.Fatalf("%v + %v = %v carry %d; math/big %v, wrapped %v", x, y, d, carry, want, wrapped)
			}
			d = append(d[:0], x...)
			borrow := SubWords(d, y)
			want, wrapped = mod(new(big.Int).Sub(xb, yb), bitsN)
			if WordsToBig(d).Cmp(want) != 0 || (borrow != 0) != wrapped {
				t.Fatalf("%v - %v = %v borrow %d; math/big %v, wrapped %v", x, y, d, borrow, want, wrapped)
			}
		}
	}
}

// TestWordsShorterDestination checks that only len(d) words of the source count.
func TestWordsShorterDestination(t *testing.T) {
	d := []uint64{max64}
	if c := AddWords(d, []uint64{1, 7}); d[0] != 0 || c != 1 {
		t.Errorf("AddWords: %v, carry %d; want [0], 1", d, c)
	}
	if b := SubWords(d, []uint64{1, 7}); d[0] != max64 || b != 1 {
		t.Errorf("SubWords: %v, borrow %d; want [max], 1", d, b)
	}
	if c := CmpWords([]uint64{5}, []uint64{5, 9}); c != 0 {
		t.Errorf("CmpWords = %d, want 0", c)
	}
}

func TestBigToWordsRefuses(t *testing.T) {
	big128 := new(big.Int).Lsh(big.NewInt(1), 128)
	tests := []struct {
		name string
		x    *big.Int
		n    int
		ok   bool
	}{
		{"zero", new(big.Int), 1, true},
		{"2^128 - 1 in two words", new(big.Int).Sub(big128, big.NewInt(1)), 2, true},
		{"2^128 in two words", big128, 2, false},
		{"negative", big.NewInt(-1), 3, false},
	}
	for _, tc := range tests {
		w, ok := BigToWords(tc.x, tc.n)
		if ok != tc.ok || ok && WordsToBig(w).Cmp(tc.x) != 0 {
			t.Errorf("%s: %v, %v", tc.name, w, ok)
		}
	}
}

func allOnes(n int) []uint64 {
	w := make([]uint64, n)
	for i := range w {
		w[i] = max64
	}
	return w
}

func oneWord(n int) []uint64 {
	w := make([]uint64, n)
	w[0] = 1
	return w
}
