package stats

import (
	"fmt"
	"math"
	"math/bits"
	"sync"
	"sync/atomic"
)

// SequentialInterval returns the exact confidence interval at level for the success
// probability p of Bernoulli trials observed until the h-th success, which came at
// trial L (inverse, or negative binomial, sampling):
//
//	low  = Beta⁻¹((1 − level)/2; h, L − h + 1)
//	high = Beta⁻¹((1 + level)/2; h, L − h)          (1 when L = h)
//
// The ends invert the two tails of L as Clopper and Pearson invert those of a binomial
// count: P(L <= l) = P(Bin(l, p) >= h) = I_p(h, l − h + 1), so low solves
// P(L <= L_obs; low) = (1 − level)/2, and P(L >= l) = 1 − I_p(h, l − h), so high solves
// P(L >= L_obs; high) = (1 − level)/2 (the binomial-Beta identity is common practice;
// the derivation is ours, and testdata/reference/sequential_mc_scipy.py checks the ends
// against scipy's negative binomial tails). In Clopper-Pearson terms it is the lower
// end of ClopperPearson(h, L) and the upper end of ClopperPearson(h − 1, L − 1).
// Besag & Clifford (1991) give no interval for their sequential p-value; this one
// describes the Monte Carlo error of h/L as an estimate of the permutation p-value.
// It returns an error unless 1 <= h <= L and 0 < level < 1.
func SequentialInterval(h, l int64, level float64) (low, high float64, err error) {
	if h < 1 || l < h {
		return 0, 0, fmt.Errorf("sequential interval: need 1 <= h <= L, got h = %d, L = %d", h, l)
	}
	if low, _, err = ClopperPearson(h, l, level); err != nil {
		return 0, 0, fmt.Errorf("sequential interval: %w", err)
	}
	high = 1
	if l > h {
		if _, high, err = ClopperPearson(h-1, l-1, level); err != nil {
			return 0, 0, fmt.Errorf("sequential interval: %w", err)
		}
	}
	return low, high, nil
}

// sequentialSummary is the result of Besag & Clifford's rule that stopped at the h-th
// exceedance, the L-th resample (see [KruskalWallisPermutation]).
func sequentialSummary(h, l, m int64, level float64) (Permutation, error) {
	if h < 1 || l < h || l > m {
		return Permutation{}, fmt.Errorf("sequential summary: need 1 <= h <= L <= m, got h = %d, L = %d, m = %d", h, l, m)
	}
	fh, fl := float64(h), float64(l)
	ph := fh / fl
	out := Permutation{
		Resamples:    l,
		Exceed:       h,
		P:            ph,
		SE:           math.Sqrt(float64(ph*(1-ph)) / fl),
		Level:        level,
		StopAfter:    h,
		MaxResamples: m,
		Stopped:      true,
	}
	var err error
	if out.CILow, out.CIHigh, err = SequentialInterval(h, l, level); err != nil {
		return Permutation{}, err
	}
	return out, nil
}

// seqStop applies the sequential rule to blocks that finish in any order: it consumes
// the blocks' counts in block order, and at the first block where the running count
// reaches h it records that block, so that no later block is started and the ones
// already running give up (see [permSetup.run]). Each block also records which of its
// resamples exceeded, one bit per resample, so that the h-th exceedance is found
// within the stopping block; and a block ends as soon as it has found the
// exceedances it needs ([seqStop.need]), so that the rule draws little more than the
// L resamples it reports even when a block is long (10^6 observations).
type seqStop struct {
	h      int64
	hits   []uint64 // PermutationBlockSize/64 words per block
	mu     sync.Mutex
	done   []bool  // block finished
	counts []int64 // its exceedances
	next   int64   // the first block not consumed
	before int64   // exceedances of the blocks consumed
	// stopBlock is the block where the count reaches h; math.MaxInt64 until known.
	stopBlock atomic.Int64
}

const seqWords = PermutationBlockSize / 64

func newSeqStop(h, blocks int64) *seqStop {
	s := &seqStop{h: h, hits: make([]uint64, blocks*seqWords), done: make([]bool, blocks), counts: make([]int64, blocks)}
	s.stopBlock.Store(math.MaxInt64)
	return s
}

// blockHits is block j's bitmap of exceedances.
func (s *seqStop) blockHits(j int64) []uint64 { return s.hits[j*seqWords : (j+1)*seqWords] }

// past reports whether block j comes after the stopping block, so its work is not
// needed.
func (s *seqStop) past(j int64) bool { return j > s.stopBlock.Load() }

// stopped reports whether the rule has stopped; the poll of [runBlocks].
func (s *seqStop) stopped() bool { return s.stopBlock.Load() != math.MaxInt64 }

// need is how many exceedances block j must find for the rule to stop within it, as
// far as is known now: h − (exceedances of blocks 0..j−1) once those are all consumed,
// else h. It only ever decreases, and a block that has found need exceedances holds the
// stop (the h-th exceedance is its need-th or comes earlier), so it may end there.
func (s *seqStop) need(j int64) int64 {
	s.mu.Lock()
	defer s.mu.Unlock()
	if s.next == j {
		return s.h - s.before
	}
	return s.h
}

// finish records block j's count and consumes the blocks now finished in order.
func (s *seqStop) finish(j, count int64) {
	s.mu.Lock()
	defer s.mu.Unlock()
	s.done[j], s.counts[j] = true, count
	for s.next < int64(len(s.done)) && s.done[s.next] && !s.stopped() {
		if s.before+s.counts[s.next] >= s.h {
			s.stopBlock.Store(s.next)
			return
		}
		s.before += s.counts[s.next]
		s.next++
	}
}

// stopAt returns the 1-based index L of the resample that brought the h-th
// exceedance; call it after the work, when [seqStop.stopped] holds.
func (s *seqStop) stopAt() (int64, error) {
	j := s.stopBlock.Load()
	need := s.h - s.before // 1 <= need <= the block's count
	for w, word := range s.blockHits(j) {
		if c := int64(bits.OnesCount64(word)); c < need {
			need -= c
			continue
		}
		for ; need > 1; need-- {
			word &= word - 1 // drop the lowest set bit
		}
		return j*PermutationBlockSize + int64(w)*64 + int64(bits.TrailingZeros64(word)) + 1, nil
	}
	return 0, fmt.Errorf("sequential rule: block %d holds fewer exceedances than counted", j)
}
