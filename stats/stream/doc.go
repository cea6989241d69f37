// Package stream is rankplan's specified random stream: every random draw the tool
// makes is defined here, step by step, so that another implementation, in any
// language, can reproduce it from this text alone. Nothing depends on the internals of
// a library beyond the published generator.
//
// # 1. Keys
//
// A stream is cut into numbered blocks j = 0, 1, 2, ..., and block j of a use has its
// own 32-byte key ([Key]):
//
//	key = SHA-256( "rankplan/stream/v1" || 0x00 || purpose || 0x00 ||
//	               uint64be(seed) || uint32be(len(analysisID)) || analysisID ||
//	               uint64be(j) )
//
// where || is concatenation, uint64be and uint32be are big-endian encodings, purpose
// is a short printable ASCII label of the use (for example "kw-permutation") and
// analysisID is the analysis's identifier as raw bytes (its length in bytes is what is
// encoded). SHA-256 is FIPS 180-4. Different purposes, seeds, analyses and blocks give
// unrelated keys, so no two uses share draws, and the draws of a block do not depend
// on how many goroutines run the blocks or in which order.
//
// # 2. Raw 64-bit values
//
// The key is the 32-byte seed of ChaCha8Rand as specified by C2SP
// (https://c2sp.org/chacha8rand), which Go's math/rand/v2 ChaCha8 implements. Each
// raw value is the generator's next 64-bit output (eight output bytes read as a
// little-endian unsigned integer), in order; nothing is skipped. The first outputs of
// the spec's test vector (seed "ABCDEFGHIJKLMNOPQRSTUVWXYZ123456") are
// 0xb773b6063d4616a5, 0x1160af22a66abc3c, 0x8c2599d9418d287c, ...
//
// # 3. Integers below n
//
// [Stream.Below] returns an integer uniform on [0, n), n >= 1, by Lemire's
// multiply-and-reject method (Lemire 2019, "Fast Random Integer Generation in an
// Interval", ACM Trans. Model. Comput. Simul. 29(1):3), with all
// arithmetic on unsigned 64-bit integers:
//
//	x  = next raw value
//	hi, lo = high and low 64 bits of the 128-bit product x·n
//	if lo < n:
//	    t = (2^64 − n) mod n          (that is, 2^64 mod n)
//	    while lo < t:
//	        x = next raw value
//	        hi, lo = high and low 64 bits of x·n
//	return hi
//
// Each call consumes one raw value, plus one more for every rejection. The chance of a
// rejection is t/2^64 < n/2^64, so it is negligible for small n and close to 1/2 for n
// just above 2^63. Powers of two are not special-cased: they take the high bits too.
//
// # 4. Shuffles
//
// [ShuffleInt32] and [Shuffle] permute a slice a of length n in place by Fisher-Yates
// in Durstenfeld's form (Durstenfeld 1964, Commun. ACM 7:420):
//
//	for i = n−1 down to 1:
//	    j = Below(i + 1)
//	    swap a[i], a[j]
//
// One Below call per i (n − 1 calls); a slice of length 0 or 1 consumes nothing.
//
// # 5. Resampling with replacement
//
// [Indices] fills dst, in index order, with dst[i] = Below(n): len(dst) independent
// uniform indices in [0, n), as a bootstrap resample of n items needs (usually with
// len(dst) = n).
//
// # Versioning
//
// [Label] names this scheme. Any change to the key layout, the generator or the
// algorithms above changes every result of the tool, so it needs a new label ("v2"),
// never an edit of v1. The tests pin the scheme with golden values and with an
// independent Python implementation (testdata/stream_ref.py).
package stream
