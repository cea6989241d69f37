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
// # 6. Uniform doubles and binomial counts
//
// A uniform double is U() = (x >> 11)·2^−53 for the next raw value x: one of the 2^53
// multiples of 2^−53 in [0, 1), computed exactly.
//
// Binomial(n, a/b), for integers n >= 0, 0 <= a <= b, b >= 1, is drawn as follows (the
// code is binomialParams in package stats, which holds the portable log and exp it needs):
//
//	n = 0 or a = 0: 0;  a = b: n  (no draw)
//	if 2a > b: a = b − a, and the result y is returned as n − y
//	p = a/b, q = (b − a)/b            (correctly rounded quotients of the integers)
//	n·p < 30: inversion (BINV); otherwise BTPE
//
// Inversion (Kachitvichyanukul & Schmeiser 1988, "Binomial random variate generation",
// Commun. ACM 31:216-222, algorithm BINV; Devroye 1986, Non-Uniform Random Variate
// Generation, §X.4): with s = p/q, A = (n + 1)·s, f₀ = exp(n·log1p(−p)) and
// bound = min(n, floor(n·p + 10·sqrt(n·p·q + 1))), draw u = U(), set y = 0, f = f₀, and
// while u >= f: u = u − f, y = y + 1, and f = f·(A/y − s); if y passes bound, start again
// with a new u (a chance below 10^−20, which only catches what rounding leaves out of
// the sum). BTPE: the algorithm of the same paper, rejection from a hat of a triangle,
// two parallelograms and two exponential tails, two U() per attempt, with the exact
// recurrence near the mode and the paper's squeeze and Stirling bound elsewhere; its
// steps are written out in the comment of binomialBTPE in package stats, and the Stirling
// correction uses the series' own coefficients (13860 − 462/x² + 132/x⁴ − 99/x⁶ + 140/x⁸)/
// (166320·x).
//
// Why the counts are the same everywhere: besides integer arithmetic and the raw values,
// the sampler uses only float64 +, −, ×, ÷ and sqrt (correctly rounded by IEEE 754 on
// every platform), floor and |x| (exact), and log, log1p and exp computed by package
// stats's portable functions (series in those same operations; no math.Log or math.Exp,
// whose last bits differ between architectures). Every product that is then added is
// rounded on its own (Go's float64(x*y)), so that no compiler may fuse it into a
// multiply-add. A count depends on floating point only through comparisons of such
// values, and they are the same bits on every architecture: TestBinomialCountBits in
// package stats hashes counts on a grid, checked by bench/arch-determinism.sh on amd64
// (GOAMD64 v1 and v3) and arm64. BTPE rather than a table method was chosen because a
// resample's binomials all have different n and p, so no table could be reused.
//
// # 7. Multinomial counts of a resample
//
// A bootstrap resample of a group of n sorted values in m runs of equal values, of
// lengths t_0..t_{m−1} (ascending values), needs only the count of draws from each run.
// Under the counts scheme (purpose "kw-effect-counts", blocks of 64 resamples), each
// resample draws, for each group in order, with the runs shorter than 8 ("short"; total
// length S) laid end to end in ascending order as one cell:
//
//	R = n;  L = n
//	if S > 0:  X = Binomial(R, S/L) (§6);  R = R − X;  L = L − S
//	for each run l of length t_l >= 8, ascending, while R > 0:
//	           x_l = Binomial(R, t_l/L) (§6, a = t_l, b = L);  R = R − x_l;  L = L − t_l
//	X times:   j = Below(S), counting the short run that holds position j of the cell
//
// (a run left out once R is 0 has count 0; a cell whose length is all that is left,
// t = L, takes R without a draw, so a group of short runs alone draws n times
// Below(n)). Sequential conditional binomials give the multinomial of the cells, and
// given X the short cell's draws are X uniform positions in it, so the counts are
// Multinomial(n; t_0/n, ..., t_{m−1}/n), the law of the counts of n uniform draws
// (common practice). Short runs go through indices because a binomial costs several
// index draws.
//
// # Versioning
//
// [Label] names this scheme. Any change to the key layout, the generator or the
// algorithms above changes every result of the tool, so it needs a new label ("v2"),
// never an edit of v1. Sections 6 and 7 were added after v1's first release for a new
// purpose ("kw-effect-counts"); they change no draw of sections 1 to 5. The tests pin
// the scheme with golden values and with an independent Python implementation
// (testdata/stream_ref.py); sections 6 and 7 are pinned by TestBinomialCountBits and
// checked against exact binomial and multinomial laws in package stats.
package stream
