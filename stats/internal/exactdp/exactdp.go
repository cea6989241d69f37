// Package exactdp is the dynamic programme behind stats.KruskalWallisExact: the exact
// permutation distribution of the Kruskal-Wallis statistic T = Σ_i S_i²/n_i (S_i the
// doubled rank sums) given the group sizes and the tie blocks, summed over the pooled
// values in ascending order with network-style pruning. stats.KruskalWallisExact
// documents the method, its precision, determinism and budget for users; this package
// holds the programme itself:
//
//   - plan.go: the groups in canonical order, the integer weights L/n_i and the bit
//     layout of a state key;
//   - run.go: the layers of the programme, one value or one whole tie block at a time,
//     and the final evaluation of T·L against T_obs·L;
//   - layers.go: the states of a layer, the chunks they are extended in and the merge
//     of their successors through hash partitions, on the goroutines of
//     [blockrun.Run];
//   - settle.go: the exact integer bounds that drop or count a state early.
//
// Methods: docs/methods.md §1.3 (the conditional null with ties) and the sources cited
// beside each part.
package exactdp

import (
	"context"
	"errors"
	"fmt"
)

// Block is one tie block of the pooled values, in ascending order: Size tied values
// with doubled midrank Rank2.
type Block struct {
	Rank2 int64
	Size  int
}

// Budget bounds a run: MaxStates live states at once and MaxWork units of work in all
// (a transition, a state settled early or a final evaluation), both positive. Progress,
// if not nil, is called after each layer with the work so far and MaxWork. Workers is
// the number of goroutines (0: GOMAXPROCS, at most 4); the result does not depend on
// it.
type Budget struct {
	MaxStates int64
	MaxWork   int64
	Progress  func(done, total int64)
	Workers   int
}

// Result is the p-value P(T* >= T_obs) and the work it took: the peak of live states
// and the units of work.
type Result struct {
	P      float64
	States int64
	Work   int64
}

// ErrBudget is returned, wrapped with the figures, when a design needs more states or
// work than the budget allows or is outside the range the programme represents.
var ErrBudget = errors.New("exact p-value: the design exceeds the work budget")

// MaxN is the largest number of observations the programme takes.
const MaxN = 65535

// CheckSize returns ErrBudget (wrapped) when the groups of the given sizes hold more
// than MaxN observations; callers check it before copying the tie blocks.
func CheckSize(counts []int) error {
	n := 0
	for _, c := range counts {
		n += c
	}
	if n > MaxN {
		return fmt.Errorf("%w: N = %d is above the exact method's limit of %d", ErrBudget, n, MaxN)
	}
	return nil
}

// PValue returns P(T* >= T_obs) over every assignment of the pooled values (the tie
// blocks, ascending) to groups of the sizes counts, all equally likely, where T_obs
// comes from the observed doubled rank sums rankSum2 (same order as counts). The
// caller has checked that counts, blocks and rankSum2 belong together and that not
// every value is tied. It returns ErrBudget (wrapped) for a design over the budget or
// out of range, and ctx's error, unwrapped, when ctx ends the run.
func PValue(ctx context.Context, counts []int, blocks []Block, rankSum2 []int64, b Budget) (Result, error) {
	if b.MaxStates <= 0 || b.MaxWork <= 0 || b.Workers < 0 {
		return Result{}, fmt.Errorf("exact p-value: budget fields must be positive (MaxStates %d, MaxWork %d, Workers %d)",
			b.MaxStates, b.MaxWork, b.Workers)
	}
	if len(counts) != len(rankSum2) || len(blocks) < 2 {
		return Result{}, fmt.Errorf("exact p-value: %d groups, %d rank sums, %d tie blocks", len(counts), len(rankSum2), len(blocks))
	}
	pl, err := newPlan(counts, blocks)
	if err != nil {
		return Result{}, err
	}
	return pl.run(ctx, b, pl.observed(counts, rankSum2), nil, true)
}
