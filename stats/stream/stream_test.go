package stream

import (
	"encoding/hex"
	"encoding/json"
	"flag"
	"fmt"
	"math/big"
	"os"
	"slices"
	"strconv"
	"strings"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"
)

var update = flag.Bool("update", false, "rewrite testdata/golden.json from the current code (read the diff: any change breaks reproducibility)")

// TestChaCha8TestVector checks the raw values against the ChaCha8Rand test vector of
// the C2SP specification (https://c2sp.org/chacha8rand), as copied in Go 1.26.8
// src/math/rand/v2/chacha8_test.go (chacha8seed and the first 8 entries of
// chacha8output).
func TestChaCha8TestVector(t *testing.T) {
	var seed [32]byte
	copy(seed[:], "ABCDEFGHIJKLMNOPQRSTUVWXYZ123456")
	want := []uint64{
		0xb773b6063d4616a5, 0x1160af22a66abc3c, 0x8c2599d9418d287c, 0x7ee07e037edc5cd6,
		0xcfaa9ee02d1c16ad, 0x0e090eef8febea79, 0x3c82d271128b5b3e, 0x9c5addc11252a34f,
	}
	s := New(seed)
	for i, w := range want {
		if got := s.Uint64(); got != w {
			t.Errorf("output %d = %#016x, C2SP chacha8rand vector %#016x", i, got, w)
		}
	}
}

// pyRef is testdata/stream_ref.json, written by testdata/stream_ref.py: an independent
// Python 3.11.2 implementation of this package's documentation (hashlib SHA-256, its
// own ChaCha8Rand checked against the C2SP test vector, Lemire with Python integers).
type pyRef struct {
	Generator string `json:"generator"`
	Python    string `json:"python"`
	Keys      []struct {
		Purpose    string `json:"purpose"`
		Seed       string `json:"seed"`
		AnalysisID string `json:"analysis_id"`
		Block      string `json:"block"`
		Key        string `json:"key"`
	} `json:"keys"`
	Raw struct {
		Purpose    string   `json:"purpose"`
		Seed       string   `json:"seed"`
		AnalysisID string   `json:"analysis_id"`
		Block      string   `json:"block"`
		Values     []string `json:"values"`
	} `json:"raw"`
	Below []struct {
		N           string   `json:"n"`
		Block       string   `json:"block"`
		Draws       []string `json:"draws"`
		RawConsumed int      `json:"raw_consumed"`
	} `json:"below"`
	Shuffles []struct {
		Size        int     `json:"size"`
		Block       string  `json:"block"`
		Perm        []int32 `json:"perm"`
		RawConsumed int     `json:"raw_consumed"`
	} `json:"shuffles"`
	Indices struct {
		N     int    `json:"n"`
		Count int    `json:"count"`
		Block string `json:"block"`
		Draws []int  `json:"draws"`
	} `json:"indices"`
}

func mustUint(t *testing.T, s string) uint64 {
	t.Helper()
	u, err := strconv.ParseUint(s, 10, 64)
	if err != nil {
		t.Fatalf("reference value %q: %v", s, err)
	}
	return u
}

func loadPyRef(t *testing.T) *pyRef {
	t.Helper()
	b, err := os.ReadFile("testdata/stream_ref.json")
	if err != nil {
		t.Fatal(err)
	}
	var ref pyRef
	if err := json.Unmarshal(b, &ref); err != nil {
		t.Fatal(err)
	}
	if ref.Python != "3.11.2" || len(ref.Keys) == 0 || len(ref.Raw.Values) < 250 ||
		len(ref.Below) == 0 || len(ref.Shuffles) == 0 || len(ref.Indices.Draws) == 0 {
		t.Fatalf("testdata/stream_ref.json is incomplete or from another Python (%q)", ref.Python)
	}
	return &ref
}

// nextAfter returns the raw value at position skip (counting from 0) of the stream of key.
func nextAfter(key [32]byte, skip int) uint64 {
	s := New(key)
	for range skip {
		s.Uint64()
	}
	return s.Uint64()
}

// TestPythonReference compares keys, raw values, Below, shuffles and Indices with the
// independent Python implementation (testdata/stream_ref.py, Python 3.11.2 standard
// library). The raw values run past 124 outputs, so the ChaCha8Rand reseed is covered;
// the consumption counts check that each call takes exactly the documented raw values.
func TestPythonReference(t *testing.T) {
	ref := loadPyRef(t)
	for _, c := range ref.Keys {
		got := Key(c.Purpose, mustUint(t, c.Seed), c.AnalysisID, mustUint(t, c.Block))
		if hex.EncodeToString(got[:]) != c.Key {
			t.Errorf("Key(%q, %s, %q, %s) = %x, Python hashlib %s", c.Purpose, c.Seed, c.AnalysisID, c.Block, got, c.Key)
		}
	}

	s := New(Key(ref.Raw.Purpose, mustUint(t, ref.Raw.Seed), ref.Raw.AnalysisID, mustUint(t, ref.Raw.Block)))
	for i, w := range ref.Raw.Values {
		if got := fmt.Sprintf("%016x", s.Uint64()); got != w {
			t.Fatalf("raw value %d = %s, Python %s", i, got, w)
		}
	}

	for _, c := range ref.Below {
		n := mustUint(t, c.N)
		key := Key("test-below", 7, "below", mustUint(t, c.Block))
		s := New(key)
		for i, w := range c.Draws {
			if got := s.Below(n); got != mustUint(t, w) {
				t.Fatalf("Below(%d) draw %d = %d, Python %s", n, i, got, w)
			}
		}
		if got, want := s.Uint64(), nextAfter(key, c.RawConsumed); got != want {
			t.Errorf("Below(%d): %d draws did not consume exactly %d raw values", n, len(c.Draws), c.RawConsumed)
		}
	}

	for _, c := range ref.Shuffles {
		key := Key("test-shuffle", 7, "shuffle", mustUint(t, c.Block))
		a := make([]int32, c.Size)
		for i := range a {
			a[i] = int32(i)
		}
		s := New(key)
		ShuffleInt32(s, a)
		if !slices.Equal(a, c.Perm) {
			t.Errorf("shuffle of %d = %v, Python %v", c.Size, a, c.Perm)
		}
		if got, want := s.Uint64(), nextAfter(key, c.RawConsumed); got != want {
			t.Errorf("shuffle of %d did not consume exactly %d raw values", c.Size, c.RawConsumed)
		}
	}

	dst := make([]int, ref.Indices.Count)
	Indices(New(Key("test-indices", 7, "indices", mustUint(t, ref.Indices.Block))), dst, ref.Indices.N)
	if !slices.Equal(dst, ref.Indices.Draws) {
		t.Errorf("Indices = %v, Python %v", dst, ref.Indices.Draws)
	}
}

// TestKeyLayout checks Key against SHA-256 of the layout spelled out byte by byte
// (the input below was also hashed with coreutils sha256sum, which printed the digest
// in the comment:
//
//	printf 'rankplan/stream/v1\0kw-permutation\0\0\0\0\0\0\0\x30\x39\0\0\0\x07primary\0\0\0\0\0\0\0\x01' | sha256sum
//	1e010b56279ac034ed6b98f25bf8b350e052572d511ba9de10023aab7ccc5327
//
// ) and checks that every field changes the key.
func TestKeyLayout(t *testing.T) {
	got := Key("kw-permutation", 12345, "primary", 1)
	if want := "1e010b56279ac034ed6b98f25bf8b350e052572d511ba9de10023aab7ccc5327"; hex.EncodeToString(got[:]) != want {
		t.Errorf("Key = %x, sha256sum %s", got, want)
	}
	base := Key("kw-permutation", 12345, "primary", 0)
	variants := map[string][32]byte{
		"purpose":  Key("bootstrap", 12345, "primary", 0),
		"seed":     Key("kw-permutation", 12346, "primary", 0),
		"analysis": Key("kw-permutation", 12345, "primarz", 0),
		"block":    Key("kw-permutation", 12345, "primary", 1),
		// The length prefix keeps the id and the block number apart.
		"id/block boundary": Key("kw-permutation", 12345, "primary\x00", 0),
	}
	for name, k := range variants {
		if k == base {
			t.Errorf("changing the %s does not change the key", name)
		}
	}
}

func panics(f func()) (msg string, ok bool) {
	defer func() {
		if r := recover(); r != nil {
			msg, ok = fmt.Sprint(r), true
		}
	}()
	f()
	return "", false
}

// TestProgrammerErrors: the documented panics.
func TestProgrammerErrors(t *testing.T) {
	cases := []struct {
		name string
		f    func()
	}{
		{"empty purpose", func() { Key("", 1, "a", 0) }},
		{"purpose with NUL", func() { Key("kw\x00perm", 1, "a", 0) }},
		{"purpose with space", func() { Key("kw perm", 1, "a", 0) }},
		{"purpose not ASCII", func() { Key("kw-pérm", 1, "a", 0) }},
		{"purpose too long", func() { Key(string(make([]byte, 65)), 1, "a", 0) }},
		{"Below(0)", func() { New([32]byte{}).Below(0) }},
		{"Indices n = 0", func() { Indices(New([32]byte{}), make([]int32, 3), 0) }},
		{"Indices n < 0", func() { Indices(New([32]byte{}), make([]int64, 3), -5) }},
	}
	for _, c := range cases {
		if msg, ok := panics(c.f); !ok {
			t.Errorf("%s: no panic", c.name)
		} else if len(msg) < 8 || msg[:8] != "stream: " {
			t.Errorf("%s: panic message %q lacks the package prefix", c.name, msg)
		}
	}
	for _, p := range []string{"a-b_c.9~", strings.Repeat("x", 64)} {
		if _, ok := panics(func() { Key(p, 1, "", 0) }); ok {
			t.Errorf("valid purpose %q panics", p)
		}
	}
}

// belowOracle is Lemire's accept rule computed with math/big instead of bits.Mul64:
// it takes raw values from s until x·n mod 2^64 >= 2^64 mod n and returns
// floor(x·n / 2^64), also reporting how many raw values it took.
func belowOracle(s *Stream, n uint64) (v uint64, used int) {
	two64 := new(big.Int).Lsh(big.NewInt(1), 64)
	bn := new(big.Int).SetUint64(n)
	t := new(big.Int).Mod(two64, bn)
	for {
		used++
		p := new(big.Int).Mul(new(big.Int).SetUint64(s.Uint64()), bn)
		lo := new(big.Int).Mod(p, two64)
		if lo.Cmp(t) >= 0 {
			return new(big.Int).Rsh(p, 64).Uint64(), used
		}
	}
}

// TestBelowRejection drives Below where rejections are frequent and compares every
// draw with the big-integer oracle on a second stream with the same key. For
// n = 2^63 + 1 the rejection chance per raw value is (2^63 − 1)/2^64, just under 1/2,
// so the oracle's raw-value count must be near twice the number of draws.
func TestBelowRejection(t *testing.T) {
	cases := []struct {
		n          uint64
		minRejects int // at 20,000 draws
	}{
		{1<<63 + 1, 18000}, // expect ~20,000 rejections (geometric, mean 1 per draw)
		{3 << 61, 5500},    // 2^64 mod n = 2^62: chance 1/4, expect ~6,667
		{1<<64 - 1, 0},     // 2^64 mod n = 1: only x·n ≡ 0 rejected
		{10, 0},
		{1 << 40, 0}, // a power of two: never rejects (2^64 mod n = 0)
	}
	const draws = 20000
	for i, c := range cases {
		key := Key("test-rejection", 1, "", uint64(i))
		s, o := New(key), New(key)
		used := 0
		for d := range draws {
			want, u := belowOracle(o, c.n)
			used += u
			if got := s.Below(c.n); got != want {
				t.Fatalf("n = %d, draw %d: Below = %d, big-integer oracle %d", c.n, d, got, want)
			}
			if want >= c.n {
				t.Fatalf("n = %d: oracle out of range", c.n)
			}
		}
		if rej := used - draws; rej < c.minRejects {
			t.Errorf("n = %d: %d rejections in %d draws, expected at least %d", c.n, rej, draws, c.minRejects)
		} else if c.minRejects == 0 && rej > 0 && c.n < 1<<40 {
			t.Errorf("n = %d: %d rejections, probability < 2^-60", c.n, rej)
		}
		if s.Uint64() != o.Uint64() {
			t.Errorf("n = %d: Below and the oracle consumed different numbers of raw values", c.n)
		}
	}
}

// chiSquareP returns the upper tail of the chi-square statistic of counts against
// equal expected counts (gonum v0.17.0 distuv.ChiSquared).
func chiSquareP(counts []int) (stat, p float64) {
	total := 0
	for _, c := range counts {
		total += c
	}
	e := float64(total) / float64(len(counts))
	for _, c := range counts {
		d := float64(c) - e
		stat += d * d / e
	}
	return stat, distuv.ChiSquared{K: float64(len(counts) - 1)}.Survival(stat)
}

// TestBelowUniform: chi-square goodness of fit of Below on fixed seeds. For large n the
// range is cut into 16 equal buckets (n divisible by 16), so the rejection path's
// output is tested too. The threshold 1e-4 is fixed in advance; the seeds are fixed, so
// the test is deterministic.
func TestBelowUniform(t *testing.T) {
	cases := []struct {
		n       uint64
		buckets uint64
	}{
		{2, 2}, {7, 7}, {10, 10}, {1000, 1000},
		{3 << 61, 16}, {1 << 63, 16}, {(1<<63 + 16) &^ 15, 16}, {1<<64 - 16, 16},
	}
	for i, c := range cases {
		s := New(Key("test-uniform", 2024, "", uint64(i)))
		counts := make([]int, c.buckets)
		width := c.n / c.buckets
		for range 200 * c.buckets {
			v := s.Below(c.n)
			if v >= c.n {
				t.Fatalf("Below(%d) = %d", c.n, v)
			}
			counts[v/width]++
		}
		if stat, p := chiSquareP(counts); p < 1e-4 {
			t.Errorf("n = %d: chi-square %.1f on %d df, p = %.2g", c.n, stat, c.buckets-1, p)
		}
	}
}

// TestShuffleAllPermutationsOf4: 24,000 shuffles of (0,1,2,3) on a fixed seed hit each
// of the 24 permutations about 1,000 times (chi-square p >= 1e-4, fixed in advance);
// the generic Shuffle draws exactly as ShuffleInt32.
func TestShuffleAllPermutationsOf4(t *testing.T) {
	key := Key("test-shuffle4", 99, "", 0)
	s, g := New(key), New(key)
	counts := map[[4]int32]int{}
	for range 24000 {
		a := []int32{0, 1, 2, 3}
		ShuffleInt32(s, a)
		b := []string{"a", "b", "c", "d"}
		Shuffle(g, b)
		for i := range a {
			if b[i] != string(rune('a'+a[i])) {
				t.Fatalf("Shuffle %v and ShuffleInt32 %v differ", b, a)
			}
		}
		counts[[4]int32(a)]++
	}
	if len(counts) != 24 {
		t.Fatalf("%d distinct permutations of 4, want 24", len(counts))
	}
	var cs []int
	for _, c := range counts {
		cs = append(cs, c)
	}
	if stat, p := chiSquareP(cs); p < 1e-4 {
		t.Errorf("chi-square %.1f on 23 df, p = %.2g", stat, p)
	}
	// Short slices consume nothing.
	s0, s1 := New(key), New(key)
	ShuffleInt32(s0, nil)
	ShuffleInt32(s0, []int32{5})
	if s0.Uint64() != s1.Uint64() {
		t.Error("shuffling 0 or 1 elements consumed raw values")
	}
}

// TestIndicesUniform: Indices over 5 values, chi-square on a fixed seed, and the same
// draws as Below in order.
func TestIndicesUniform(t *testing.T) {
	key := Key("test-indices-uniform", 3, "", 0)
	dst := make([]int32, 50000)
	Indices(New(key), dst, 5)
	s := New(key)
	counts := make([]int, 5)
	for i, v := range dst {
		if w := s.Below(5); uint64(v) != w {
			t.Fatalf("Indices[%d] = %d, Below %d", i, v, w)
		}
		counts[v]++
	}
	if stat, p := chiSquareP(counts); p < 1e-4 {
		t.Errorf("chi-square %.1f on 4 df, p = %.2g", stat, p)
	}
}

// golden is testdata/golden.json. It was written by this test with -update and must not
// be edited by hand: if the test fails, the tool's random draws have changed, and every
// Monte Carlo result recorded under the "rankplan/stream/v1" label is no longer
// reproducible. Fix the code, or introduce a new label; do not update the file.
type golden struct {
	Note       string   `json:"note"`
	Label      string   `json:"label"`
	Purpose    string   `json:"purpose"`
	Seed       string   `json:"seed"`
	AnalysisID string   `json:"analysis_id"`
	Block      string   `json:"block"`
	Key        string   `json:"key"`
	Raw        []string `json:"raw"`
	BelowN     []string `json:"below_n"`
	Below      []string `json:"below"`
	Perm10     []int32  `json:"perm10"`
}

func makeGolden() golden {
	g := golden{
		Note:       "written by `go test ./stats/stream -run TestGolden -update`; do not edit by hand. A change means the stream changed and recorded results are no longer reproducible.",
		Label:      Label,
		Purpose:    "kw-permutation",
		Seed:       "20240229",
		AnalysisID: "golden",
		Block:      "3",
	}
	key := Key(g.Purpose, 20240229, g.AnalysisID, 3)
	g.Key = hex.EncodeToString(key[:])
	s := New(key)
	for range 8 {
		g.Raw = append(g.Raw, fmt.Sprintf("%016x", s.Uint64()))
	}
	for _, n := range []uint64{1, 2, 3, 6, 10, 100, 1000, 1<<40 + 3, 1<<63 + 1, 1<<64 - 1} {
		g.BelowN = append(g.BelowN, strconv.FormatUint(n, 10))
		g.Below = append(g.Below, strconv.FormatUint(s.Below(n), 10))
	}
	g.Perm10 = []int32{0, 1, 2, 3, 4, 5, 6, 7, 8, 9}
	ShuffleInt32(s, g.Perm10)
	return g
}

// TestGolden pins seed → key → first 8 raw values → a Below sequence → a permutation of
// 10, all from one stream, against testdata/golden.json (see [golden]).
func TestGolden(t *testing.T) {
	got := makeGolden()
	const path = "testdata/golden.json"
	if *update {
		b, err := json.MarshalIndent(got, "", "  ")
		if err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(path, append(b, '\n'), 0o644); err != nil {
			t.Fatal(err)
		}
		return
	}
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	var want golden
	if err := json.Unmarshal(b, &want); err != nil {
		t.Fatal(err)
	}
	gb, _ := json.Marshal(got)
	wb, _ := json.Marshal(want)
	if string(gb) != string(wb) {
		t.Errorf("the stream no longer reproduces %s: reproducibility is broken\n got  %s\n want %s", path, gb, wb)
	}
}

// TestBelowOneAndPowersOfTwo: Below(1) is always 0 and consumes one raw value (x = 0
// gives lo = 0 < 1, but t = 0, so it is accepted); for n = 2^k the result is the top k
// bits of the raw value.
func TestBelowOneAndPowersOfTwo(t *testing.T) {
	key := Key("test-pow2", 5, "", 0)
	s, raw := New(key), New(key)
	for k := range 64 {
		n := uint64(1) << k
		x := raw.Uint64()
		want := uint64(0)
		if k > 0 {
			want = x >> (64 - k)
		}
		if got := s.Below(n); got != want {
			t.Errorf("Below(2^%d) = %d, top %d bits of %#x = %d", k, got, k, x, want)
		}
	}
}

func BenchmarkBelow(b *testing.B) {
	s := New(Key("bench", 1, "", 0))
	var sink uint64
	for b.Loop() {
		sink += s.Below(1000)
	}
	_ = sink
}

func BenchmarkShuffleInt32(b *testing.B) {
	a := make([]int32, 1000)
	s := New(Key("bench", 1, "", 0))
	b.ReportAllocs()
	for b.Loop() {
		ShuffleInt32(s, a)
	}
}
