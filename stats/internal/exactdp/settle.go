package exactdp

import (
	"math/bits"
)

// maxSubsetK is the most groups for which settle computes its upper bound (a
// programme over the 2^k subsets of groups); with more groups it uses the lower bound
// only.
const maxSubsetK = 6

// settle decides a state (decoded in sc, done values placed) before it is extended:
// -1 when no completion reaches the observed statistic obs = T_obs·L, +1 when every
// completion does, 0 when neither bound decides. Both bounds are computed exactly in
// integers, so the decision is exact. The values still to place are the N - done
// largest doubled midranks, whose partial sums come from pl.g.
//
// Lower bound (boxReaches): a completion gives group i a final sum Y_i = S_i + X_i
// with X_i between the sums of the r_i smallest and the r_i largest values left, and
// Σ_i Y_i = N(N+1); the minimum of T over that box and hyperplane is at most the
// minimum over completions.
//
// Upper bound, the exact maximum (k <= maxSubsetK; with more groups settle
// never drops a state). The vectors (X_i) of all completions lie in the base
// polytope {X : Σ_{i∈A} X_i <= h(A) for all A, Σ_i X_i = h(all)}, h(A) the sum of the
// Σ_{i∈A} r_i largest values left; h is a concave function of a modular one, hence
// submodular, and the polytope's vertices are the greedy vectors (Edmonds 1970,
// "Submodular functions, matroids, and certain polyhedra"; recalled from memory),
// which are completions: those giving each group a consecutive run of the sorted
// values. T is convex in X, so its maximum over completions is at such a run
// assignment. Two run orders are tried first (groups by μ_i S_i descending, and
// ascending): if either reaches obs the state cannot be dropped. Otherwise the best
// order is found by a programme over subsets (the groups already given the top
// values): 2^k' k' steps for the k' groups with room left.
//
// Both bounds are this package's own construction for this statistic, in the spirit
// of the network algorithm's longest and shortest path bounds (Mehta & Patel 1983).
// All values are int64: pl.prune guarantees L·(N(N+1))^2·N^2 < 2^63.
func (pl *plan) settle(sc *scratch, done int, obs int64) int {
	k := pl.k
	if pl.boxReaches(sc, done, obs) {
		return 1
	}
	if k > maxSubsetK {
		return 0
	}

	g, n := pl.g, int64(pl.n)
	var base int64
	ka := 0
	for i := range k {
		if sc.r[i] == 0 {
			base += int64(pl.mu[i]) * sc.s[i] * sc.s[i]
			continue
		}
		// Keep the groups with room ordered by μ_i S_i, descending.
		j := ka
		for ; j > 0 && int64(pl.mu[sc.act[j-1]])*sc.s[sc.act[j-1]] < int64(pl.mu[i])*sc.s[i]; j-- {
			sc.act[j] = sc.act[j-1]
		}
		sc.act[j] = i
		ka++
	}
	// Two run assignments first, the top values to the groups with the highest
	// μ_i S_i and to those with the lowest: when either reaches obs, the state cannot
	// be dropped and the exact maximum is not needed.
	for _, desc := range [2]bool{true, false} {
		t, hi := base, n
		for q := range ka {
			gi := sc.act[q]
			if !desc {
				gi = sc.act[ka-1-q]
			}
			y := sc.s[gi] + g[hi] - g[hi-sc.r[gi]]
			hi -= sc.r[gi]
			t += int64(pl.mu[gi]) * y * y
		}
		if t >= obs {
			return 0
		}
	}

	// Exact maximum over run assignments.
	f, q := sc.f, sc.q
	f[0], q[0] = 0, 0
	full := 1<<ka - 1
	for a := 1; a <= full; a++ {
		low := a & -a
		q[a] = q[a^low] + sc.r[sc.act[bits.TrailingZeros(uint(low))]]
		// The groups of a hold the q[a] largest values; the one of them placed last
		// holds the lowest run, which starts just above the n - q[a] smallest values.
		lo := n - q[a]
		best := int64(-1)
		for b := a; b != 0; b &= b - 1 {
			i := bits.TrailingZeros(uint(b))
			gi := sc.act[i]
			y := sc.s[gi] + g[lo+sc.r[gi]] - g[lo]
			best = max(best, f[a&^(1<<i)]+int64(pl.mu[gi])*y*y)
		}
		f[a] = best
	}
	if base+f[full] < obs {
		return -1
	}
	return 0
}

// boxReaches reports whether the box lower bound of settle is at least obs: the
// minimum of Σ_i Y_i^2 / n_i over the box A_i <= Y_i <= B_i (A_i, B_i: S_i plus the
// sum of the r_i smallest or largest values left) with Σ_i Y_i = N(N+1). That
// minimum has Y_i = clamp(λ n_i, A_i, B_i) for the λ at which the Y_i add up to
// N(N+1) (the Lagrange conditions); g(λ) = Σ_i clamp(λ n_i, A_i, B_i) is continuous
// and nondecreasing, so λ lies between the two breakpoints A_i/n_i, B_i/n_i at which
// g crosses N(N+1); there the groups split into those held at A_i, those held at
// B_i and the free set F, and the minimum is
//
//	Σ_{i∉F} Y_i^2/n_i + (N(N+1) - Σ_{i∉F} Y_i)^2 / n_F
//
// All comparisons of breakpoints are cross-multiplications of integers.
func (pl *plan) boxReaches(sc *scratch, done int, obs int64) bool {
	k := pl.k
	n, tot, l, g := int64(pl.n), pl.tot, pl.l, pl.g
	lo, hi := sc.lo, sc.hi
	inside := true // every balanced value n_i (N+1) within [A_i, B_i]
	for i := range k {
		lo[i] = sc.s[i] + g[int64(done)+sc.r[i]] - g[done]
		hi[i] = sc.s[i] + g[n] - g[n-sc.r[i]]
		bal := pl.size[i] * (n + 1)
		inside = inside && lo[i] <= bal && bal <= hi[i]
	}
	if inside {
		// The unconstrained minimum, T = N(N+1)^2 at Y_i = n_i (N+1), is in the box.
		return l*n*(n+1)*(n+1) >= obs
	}
	// Quick rejection: Y = A + θ(B - A) with θ = (N(N+1) - ΣA)/(ΣB - ΣA) is in the box
	// and on the hyperplane, so the minimum is at most T there. When that T is below
	// obs by more than float64 rounding could explain, the exact search below would
	// fail too, so this shortcut never changes the answer (and the answer does not
	// depend on how the float64 arithmetic rounds).
	var sumA, sumB int64
	for i := range k {
		sumA += lo[i]
		sumB += hi[i]
	}
	if sumB > sumA {
		th := float64(tot-sumA) / float64(sumB-sumA)
		v := 0.0
		for i := range k {
			y := float64(lo[i]) + float64(th*float64(hi[i]-lo[i]))
			v += float64(float64(pl.mu[i]) * float64(y*y))
		}
		if v < float64(obs)*(1-1e-9) {
			return false
		}
	}
	// Breakpoints p/q: A_i/n_i and B_i/n_i. Find the largest with g <= tot (pl, ql)
	// and the smallest with g >= tot (ph, qh).
	var pLo, qLo, pHi, qHi int64 = -1, 0, -1, 0
	for j := range 2 * k {
		p, q := lo[j>>1], pl.size[j>>1]
		if j&1 == 1 {
			p = hi[j>>1]
		}
		var gq int64 // q·g(p/q)
		for i := range k {
			gq += min(max(p*pl.size[i], q*lo[i]), q*hi[i])
		}
		if gq <= q*tot && (pLo < 0 || p*qLo > pLo*q) {
			pLo, qLo = p, q
		}
		if gq >= q*tot && (pHi < 0 || p*qHi < pHi*q) {
			pHi, qHi = p, q
		}
	}
	// Groups held at B_i (B_i/n_i <= lower breakpoint) or at A_i (A_i/n_i >= upper
	// breakpoint); the rest are free.
	var fixed, rest, nF int64
	rest = tot
	for i := range k {
		var y int64
		switch {
		case hi[i]*qLo <= pLo*pl.size[i]:
			y = hi[i]
		case lo[i]*qHi >= pHi*pl.size[i]:
			y = lo[i]
		default:
			nF += pl.size[i]
			continue
		}
		fixed += int64(pl.mu[i]) * y * y
		rest -= y
	}
	if nF == 0 {
		return fixed >= obs
	}
	return nF*fixed+l*rest*rest >= obs*nF
}
