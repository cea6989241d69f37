package stats

import (
	"context"
	"errors"
	"fmt"

	"rankplan/stats/internal/exactdp"
)

// ExactBudget bounds the work of [KruskalWallisExact]; the zero value means
// [DefaultExactBudget]. The bounds count states and transitions of the dynamic
// programme, never time, so whether a design fits is the same on every machine.
type ExactBudget struct {
	// MaxStates is the most DP states alive at once: the states of the layer being
	// read plus the successors made for the next layer before they are merged. At
	// the peak a live state takes about 45 bytes. Zero means
	// DefaultExactBudget.MaxStates.
	MaxStates int64
	// MaxWork is the most units of work in the whole run: a unit is one transition
	// (one state extended by one way of placing the next value or tie block), one
	// state settled early by the bounds, or one final evaluation of the statistic.
	// It bounds the time: about 60 to 150 ns per unit on the 2-core x86-64 machine
	// the package was measured on (see BenchmarkKruskalWallisExact). Zero means
	// DefaultExactBudget.MaxWork.
	MaxWork int64
	// Progress, if not nil, is called after each layer of the programme (one value or
	// one whole tie block placed) with the units of work so far and MaxWork, from the
	// calling goroutine (see [Progress]). It is not part of the budget and the result
	// does not depend on it.
	Progress Progress

	// workers is the number of goroutines of the programme (0: GOMAXPROCS, at most
	// 4); tests set it to check that the result does not depend on it.
	workers int
}

// DefaultExactBudget is the budget used for a zero [ExactBudget] (or a zero field of
// one): 3,500,000 live states (about 150 MB at the peak) and 10,000,000 units of work,
// about a second at most on the 2-core machine the package was measured on, for a
// run that finishes and for one that is refused. It admits, for example, every
// design of N <= 30 with k = 3 and (6,6,6,6), with or without ties, and (4,4,4,4,4),
// (3,3,3,3,3,3) and (80,80) with the data of BenchmarkKruskalWallisExact.
var DefaultExactBudget = ExactBudget{MaxStates: 3_500_000, MaxWork: 10_000_000}

// ErrExactBudget is returned, wrapped with the figures, when the design needs more
// states or work than the budget allows, or is outside the range the exact method
// represents (see [KruskalWallisExact]). Test with errors.Is.
var ErrExactBudget = exactdp.ErrBudget

// Exact is the exact conditional p-value of the Kruskal-Wallis test and the work it
// took.
type Exact struct {
	P      float64 // P(H* >= observed H*) under the permutation null, given the ties
	States int64   // peak live states (report in results as the work done)
	Work   int64   // units of work: transitions, settled states and final evaluations
}

// KruskalWallisExact returns the exact p-value of the Kruskal-Wallis test conditional
// on the observed tie pattern: with every one of the N!/Π n_i! assignments of the
// pooled midranks to groups of the observed sizes equally likely,
//
//	p = P(T* >= T_obs),   T = Σ_i S_i^2 / n_i,   S_i = 2 R_i (doubled rank sums)
//
// H* = (12/(N(N+1)) · T/4 - 3(N+1)) / C is an increasing function of T with the same
// constants (N, the sizes, the tie correction C) for every assignment, so H, H* and T
// give the same p (Kruskal & Wallis 1952, JASA 47:583-621; the conditional null with
// ties as in the project's docs/methods.md §1.3). With k = 2 it is the exact two-sided
// Wilcoxon-Mann-Whitney rank-sum p-value conditional on the ties,
// P(|W* - E W| >= |W - E W|), since T is then an increasing function of
// (S_1 - n_1 (N+1))^2.
//
// # Algorithm
//
// A dynamic programme over the pooled values in ascending order, the
// contingency-table view of the permutation distribution (Klotz & Teng 1977, JASA
// 72:165-169; Mehta & Patel 1983, JASA 78:427-434): an assignment is a table a_ij
// (group i, tie block j) with row sums n_i and column sums t_j, with probability
//
//	P(a) = Π_j [ Π_i C(r_ij, a_ij) / C(N - T_{j-1}, t_j) ],   r_ij = n_i - Σ_{l<j} a_il
//
// (the sequential factorisation: block j spreads its t_j tied values over the room
// r_ij left in the groups). After the first values the state is the vector of
// (c_i, S_i), the count and the sum of doubled midranks each group holds so far;
// states reached in several ways merge by adding their probabilities. A small tie
// block is spread in whole, every composition (a_1j..a_kj) at once; a larger one,
// and every untied value, one value at a time, the value going to group i with
// probability r_i/(values left), which is the same law (draws without replacement).
// The last block fills every remaining place, so the states before it are finished
// directly: T = Σ_i (S_i + r_i d_m)^2 / n_i.
//
// Network-style pruning (after Mehta & Patel 1983): before a state is extended, an
// exact upper bound and a lower bound on T over its completions are compared with
// T_obs; a state that cannot reach T_obs is dropped and one all of whose completions
// reach it is counted at once (see settle in stats/internal/exactdp for the bounds).
//
// Parts that are this package's own: the bounds; groups of equal size are
// interchangeable in T and in the transition probabilities, so a state stores the
// (c_i, S_i) of each class of equal-size groups sorted, and a value is placed in a
// run of identical groups once, with the run length as a factor; the largest group in
// canonical order is implied by the totals and not stored; the successors of a layer
// are merged by a counting sort into hash partitions and a small hash table per
// partition (see layers in stats/internal/exactdp); the chunks of a layer and the
// partitions are worked on by up to GOMAXPROCS goroutines (at most 4), with the same
// result for any number.
//
// # Exactness and precision
//
// T is compared exactly: T·L = Σ_i S_i^2 (L/n_i), L = lcm(n_1..n_k), is an integer,
// computed in 128-bit unsigned arithmetic (stats/internal/wide) for the final
// comparison and in int64 for the bounds (used only when L·(N(N+1))^2·N^2 < 2^63, else no pruning); an
// assignment counts when its integer is at least the observed one. No floating-point
// tolerance is involved (float64 is used in the bounds only to skip an exact test that
// would fail, which cannot change a decision).
//
// The probabilities are float64. Every step multiplies a path's probability by a
// factor made of products and quotients of integers and binomial coefficients
// (computed by the multiplicative formula, exact below 2^53), merges add positive
// terms, and p is a compensated (Neumaier) sum. To first order the relative error of
// P is at most (3 + Σ_j e_j)·2^-53 over the layers j, with e_j = k + 1 for a layer
// that places one value and e_j = 2tk + k + 2t + 1 + m_j for a tie block of t values
// spread in whole, m_j being the most terms added into one state (at most
// C(t+k-1, k-1)·k!). For untied data that is (N(k+1) + 3)·2^-53, about 2e-14 for
// N = 30 and k = 4. The tests check P within 1e-12 of exact fractions and the whole
// distribution's total within 1e-12 of 1. This holds as long as no probability falls
// below 2^-1022 (possible only when p itself is far below 1e-290). P is capped at 1.
//
// # Determinism
//
// The states of a layer are kept in a fixed order (by the partition of their hash,
// then by slot), each state's successors are made in a fixed order, layers are cut
// into chunks of a fixed size whatever the number of goroutines, and every sum is
// accumulated in a fixed order (within a state, a chunk, then chunk by chunk) with
// explicit float64 conversions (no fused multiply-add); no Go map is used and no
// transcendental function is called. The same Ranking gives the same P bit for bit on
// every machine, Go release and GOMAXPROCS. Relabeling groups, reordering rows or
// transforming values by a strictly increasing function does not change P either:
// the programme sees only the sizes, the tie blocks and the integer T_obs.
//
// # Budget and errors
//
// Zero fields of budget take the value of [DefaultExactBudget]. When the live states
// exceed budget.MaxStates or the work exceeds budget.MaxWork, the run stops at once
// and returns [ErrExactBudget] wrapped with the figures: the work done before
// stopping exceeds the budget by at most the work on one chunk of 4096 states per
// goroutine. The method also returns ErrExactBudget (wrapped) for designs it cannot
// represent: N > 65535, lcm(n_i) >= 2^64, or a state of more than 127 bits (k+1
// groups of the largest sizes need about k·(2 log2 N + log2 n) bits). It returns
// [ErrAllTied] (wrapped) when every observation is tied, and an error when r is nil
// or inconsistent or a budget field is negative. It never modifies r.
//
// It returns ctx's error (wrapped) when ctx is done before the programme ends. The
// context is checked before each chunk of 4096 states of a layer is extended, before
// each partition of a layer's merge and every 4096 final states, so at most a chunk's
// work per goroutine (4096 states and their transitions: milliseconds, tens of
// milliseconds for the widest tie blocks) is done after it ends.
func KruskalWallisExact(ctx context.Context, r *Ranking, budget ExactBudget) (Exact, error) {
	if err := checkRankingDeep(r); err != nil {
		return Exact{}, fmt.Errorf("exact p-value: %w", err)
	}
	if len(r.Blocks) < 2 {
		return Exact{}, fmt.Errorf("exact p-value: %w", ErrAllTied)
	}
	b, err := budget.resolve()
	if err != nil {
		return Exact{}, err
	}
	// The size limit comes first, so that the tie blocks of a large Ranking are never
	// copied.
	if err := exactdp.CheckSize(r.Counts); err != nil {
		return Exact{}, err
	}
	blocks := make([]exactdp.Block, len(r.Blocks))
	for j, blk := range r.Blocks {
		blocks[j] = exactdp.Block{Rank2: blk.Rank2, Size: blk.Size}
	}
	res, err := exactdp.PValue(ctx, r.Counts, blocks, r.RankSum2, exactdp.Budget{
		MaxStates: b.MaxStates, MaxWork: b.MaxWork, Progress: b.Progress, Workers: b.workers,
	})
	if err != nil && !errors.Is(err, ErrExactBudget) {
		return Exact{}, fmt.Errorf("exact p-value: %w", err)
	}
	return Exact{P: res.P, States: res.States, Work: res.Work}, err
}

// resolve replaces zero fields by the defaults and rejects negative ones.
func (b ExactBudget) resolve() (ExactBudget, error) {
	if b.MaxStates < 0 || b.MaxWork < 0 {
		return ExactBudget{}, fmt.Errorf("exact p-value: negative budget (MaxStates %d, MaxWork %d)",
			b.MaxStates, b.MaxWork)
	}
	if b.MaxStates == 0 {
		b.MaxStates = DefaultExactBudget.MaxStates
	}
	if b.MaxWork == 0 {
		b.MaxWork = DefaultExactBudget.MaxWork
	}
	return b, nil
}
