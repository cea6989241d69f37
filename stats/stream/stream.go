package stream

import (
	"crypto/sha256"
	"encoding/binary"
	"fmt"
	"math/bits"
	"math/rand/v2"
)

// Label names and versions the stream scheme of this package; it is the first field
// hashed into every key (see [Key]) and is what results record as the scheme.
const Label = "rankplan/stream/v1"

// KeyLayout describes, for the record, the bytes hashed by [Key].
const KeyLayout = `SHA-256("rankplan/stream/v1" || 0x00 || purpose || 0x00 || uint64be(seed) || uint32be(len(analysisID)) || analysisID || uint64be(block))`

// Generator names the raw generator and its specification, for the record.
const Generator = "ChaCha8Rand (https://c2sp.org/chacha8rand), 64-bit outputs read little-endian"

// maxPurpose is the longest purpose label Key accepts.
const maxPurpose = 64

// Key returns the 32-byte ChaCha8Rand key of block number block of the stream used for
// purpose by the analysis analysisID under the run seed seed:
//
//	key = SHA-256( "rankplan/stream/v1" || 0x00 || purpose || 0x00 ||
//	               uint64be(seed) || uint32be(len(analysisID)) || analysisID ||
//	               uint64be(block) )
//
// (SHA-256 of FIPS 180-4; the layout is [KeyLayout]). purpose must be 1 to 64 bytes of
// printable ASCII other than space (0x21 to 0x7e), so that the 0x00 after it is
// unambiguous; purposes are constants of the program, so any other purpose is a
// programmer error and Key panics. It also panics if analysisID is 2^32 bytes or
// longer, which no plan can produce.
func Key(purpose string, seed uint64, analysisID string, block uint64) [32]byte {
	if len(purpose) == 0 || len(purpose) > maxPurpose {
		panic(fmt.Sprintf("stream: purpose label must be 1 to %d bytes, got %d", maxPurpose, len(purpose)))
	}
	for i := 0; i < len(purpose); i++ {
		if c := purpose[i]; c < 0x21 || c > 0x7e {
			panic(fmt.Sprintf("stream: purpose label %q has byte %#x at %d; want printable ASCII without spaces", purpose, c, i))
		}
	}
	if uint64(len(analysisID)) > 1<<32-1 {
		panic("stream: analysis id longer than 2^32-1 bytes")
	}
	h := sha256.New()
	var buf [8]byte
	h.Write([]byte(Label))
	h.Write([]byte{0})
	h.Write([]byte(purpose))
	h.Write([]byte{0})
	binary.BigEndian.PutUint64(buf[:], seed)
	h.Write(buf[:])
	binary.BigEndian.PutUint32(buf[:4], uint32(len(analysisID)))
	h.Write(buf[:4])
	h.Write([]byte(analysisID))
	binary.BigEndian.PutUint64(buf[:], block)
	h.Write(buf[:])
	var key [32]byte
	h.Sum(key[:0])
	return key
}

// Stream is one block's random stream: ChaCha8Rand keyed by a 32-byte key (see the
// package documentation). It is not safe for concurrent use; give each goroutine its
// own Stream (one per block).
type Stream struct {
	src *rand.ChaCha8
}

// New returns the stream whose raw values are the ChaCha8Rand outputs for key (C2SP
// chacha8rand, https://c2sp.org/chacha8rand, as implemented by Go's
// math/rand/v2.NewChaCha8).
func New(key [32]byte) *Stream {
	return &Stream{src: rand.NewChaCha8(key)}
}

// Uint64 returns the next raw value: the generator's next 64-bit output.
func (s *Stream) Uint64() uint64 {
	return s.src.Uint64()
}

// Below returns an integer uniform on [0, n) by Lemire's method (Lemire 2019, "Fast
// Random Integer Generation in an Interval", ACM TOMACS 29(1):3), in
// uint64 arithmetic:
//
//	x = Uint64();  hi·2^64 + lo = x·n          (128-bit product)
//	if lo < n:
//	    t = (2^64 − n) mod n
//	    while lo < t:  x = Uint64();  hi·2^64 + lo = x·n
//	return hi
//
// Why it works: hi = floor(x·n / 2^64) maps the 2^64 values of x onto [0, n), each
// output receiving either floor(2^64/n) or that plus one values of x; the values of x
// whose low product part lo falls below t = 2^64 mod n are exactly the surplus, so
// rejecting them leaves every output with floor(2^64/n) values. The test lo < n skips
// computing t (a division) on almost every call, since t < n.
//
// n == 0 is a programmer error (there is no integer in [0, 0)) and Below panics.
func (s *Stream) Below(n uint64) uint64 {
	if n == 0 {
		panic("stream: Below(0)")
	}
	hi, lo := bits.Mul64(s.src.Uint64(), n)
	if lo < n {
		t := -n % n // (2^64 − n) mod n = 2^64 mod n
		for lo < t {
			hi, lo = bits.Mul64(s.src.Uint64(), n)
		}
	}
	return hi
}

// ShuffleInt32 permutes a in place by Fisher-Yates (Durstenfeld 1964, Commun. ACM
// 7:420):
//
//	for i = len(a)−1 down to 1:  j = s.Below(i+1);  swap a[i], a[j]
//
// It draws exactly as [Shuffle] does.
//
// It is the specification's shuffle (step 4 of the package documentation) as code,
// checked against the independent Python replay: the Monte Carlo test of package stats
// runs the same loop inline, adding ranks as it swaps, and its tests check the two agree
// (TestPermutationFusedShuffle), so no command calls this one.
func ShuffleInt32(s *Stream, a []int32) {
	for i := len(a) - 1; i > 0; i-- {
		j := s.Below(uint64(i) + 1)
		a[i], a[j] = a[j], a[i]
	}
}

// Shuffle permutes a in place by Fisher-Yates, exactly as [ShuffleInt32]:
//
//	for i = len(a)−1 down to 1:  j = s.Below(i+1);  swap a[i], a[j]
//
// Like [ShuffleInt32], it is the specification's shuffle as code; no command calls it.
func Shuffle[E any](s *Stream, a []E) {
	for i := len(a) - 1; i > 0; i-- {
		j := s.Below(uint64(i) + 1)
		a[i], a[j] = a[j], a[i]
	}
}

// Indices fills dst with uniform indices in [0, n), drawn with replacement in index
// order:
//
//	for i = 0 .. len(dst)−1:  dst[i] = s.Below(n)
//
// A bootstrap resample of n items takes len(dst) = n. n < 1 is a programmer error and
// Indices panics.
//
// It is the specification's resampling step (step 5 of the package documentation) as
// code, checked against the independent Python replay; the bootstrap of package stats
// calls Below itself, group by group, so no command calls this one.
func Indices[I ~int | ~int32 | ~int64](s *Stream, dst []I, n I) {
	if n < 1 {
		panic(fmt.Sprintf("stream: Indices with n = %d", int64(n)))
	}
	un := uint64(n)
	for i := range dst {
		dst[i] = I(s.Below(un))
	}
}
