package stats

import (
	"cmp"
	"fmt"
	"math"
	"slices"
)

// Adjustment method names, exactly as plans spell them.
const (
	AdjustNone               = "none"
	AdjustBonferroni         = "bonferroni"
	AdjustSidak              = "sidak"
	AdjustHolm               = "holm"
	AdjustHochberg           = "hochberg"
	AdjustHommel             = "hommel"
	AdjustBenjaminiHochberg  = "benjamini-hochberg"
	AdjustBenjaminiYekutieli = "benjamini-yekutieli"
)

// AdjustP returns the adjusted p-values of p, in the input order, for the named method.
// Adjusted values are monotone in the order of the raw p-values (for step methods), capped
// at 1, ties in p handled by a stable sort so the output is reproducible. An empty p gives
// an empty result. NaN, values outside [0, 1], or an unknown method give an error (never a
// panic). p is not modified.
//
// With m = len(p) and p_(1) ≤ … ≤ p_(m) the stably sorted values, the methods are
//
//	none                 p̃_i = p_i
//	bonferroni           p̃_i = min(1, m·p_i)
//	sidak                p̃_i = 1 − (1 − p_i)^m
//	holm                 p̃_(i) = max_{j≤i} min(1, (m−j+1)·p_(j))
//	hochberg             p̃_(i) = min_{j≥i} min(1, (m−j+1)·p_(j))
//	hommel               p̃_(i) = max_{I ∋ (i)} min_{j} |I|·p_(j:I)/j   (closed Simes tests)
//	benjamini-hochberg   p̃_(i) = min_{j≥i} min(1, m·p_(j)/j)
//	benjamini-yekutieli  p̃_(i) = min_{j≥i} min(1, c(m)·m·p_(j)/j),  c(m) = Σ_{j=1}^m 1/j
//
// following Bonferroni (common practice), Šidák (1967), Holm (1979), Hochberg (1988),
// Hommel (1988), Benjamini and Hochberg (1995) and Benjamini and Yekutieli (2001); the
// method doc comments below give each source. Rejection uses p̃ ≤ α (see Reject).
func AdjustP(method string, p []float64) ([]float64, error) {
	var fn func(sorted []float64, out []float64)
	switch method {
	case AdjustNone:
		fn = nil
	case AdjustBonferroni:
		fn = adjustBonferroni
	case AdjustSidak:
		fn = adjustSidak
	case AdjustHolm:
		fn = adjustHolm
	case AdjustHochberg:
		fn = adjustHochberg
	case AdjustHommel:
		fn = adjustHommel
	case AdjustBenjaminiHochberg:
		fn = adjustBenjaminiHochberg
	case AdjustBenjaminiYekutieli:
		fn = adjustBenjaminiYekutieli
	default:
		return nil, fmt.Errorf("adjust p-values: unknown method %q", method)
	}
	for i, x := range p {
		if math.IsNaN(x) || x < 0 || x > 1 {
			return nil, fmt.Errorf("adjust p-values (%s): p[%d] = %v is not in [0, 1]", method, i, x)
		}
	}
	m := len(p)
	out := make([]float64, m)
	if m == 0 {
		return out, nil
	}
	if fn == nil {
		copy(out, p)
		return out, nil
	}
	// Stable sort of the indices by p; ties keep their input order.
	order := make([]int, m)
	for i := range order {
		order[i] = i
	}
	slices.SortStableFunc(order, func(a, b int) int { return cmp.Compare(p[a], p[b]) })
	sorted := make([]float64, m)
	for k, i := range order {
		sorted[k] = p[i]
	}
	adj := make([]float64, m)
	fn(sorted, adj)
	for k, i := range order {
		out[i] = min(adj[k], 1)
	}
	return out, nil
}

// Reject reports adjusted p <= alpha, elementwise. The comparison includes equality
// (p̃ ≤ α), so an adjusted value landing exactly on alpha is a rejection. A NaN alpha
// rejects nothing.
func Reject(adjusted []float64, alpha float64) []bool {
	out := make([]bool, len(adjusted))
	for i, x := range adjusted {
		out[i] = x <= alpha
	}
	return out
}

// adjustBonferroni writes the Bonferroni adjustment of the sorted p-values s into out:
//
//	p̃_i = min(1, m·p_i)
//
// (Bonferroni inequality; common practice, see Holm 1979, Scand. J. Stat. 6:65–70, §1).
func adjustBonferroni(s, out []float64) {
	fm := float64(len(s))
	for i, x := range s {
		out[i] = min(1, float64(fm*x))
	}
}

// adjustSidak writes the Šidák adjustment of the sorted p-values s into out:
//
//	p̃_i = 1 − (1 − p_i)^m = −expm1(m·log1p(−p_i))
//
// (Šidák 1967, JASA 62:626–633); the expm1/log1p form keeps precision for small p.
// Since 1 − (1 − p)^m ≥ p for m ≥ 1, a result one rounding below p (it happens for
// m = 1) is raised to p, so an adjustment never makes a p-value smaller.
func adjustSidak(s, out []float64) {
	fm := float64(len(s))
	for i, x := range s {
		out[i] = min(1, max(x, -expm1Portable(float64(fm*log1pPortable(-x)))))
	}
}

// adjustHolm writes Holm's step-down adjustment of the sorted p-values s into out
// (1-based j):
//
//	p̃_(i) = max_{j≤i} min(1, (m−j+1)·p_(j))
//
// (Holm 1979, Scand. J. Stat. 6:65–70), a running maximum from the smallest p.
func adjustHolm(s, out []float64) {
	m := len(s)
	run := 0.0
	for k, x := range s {
		v := min(1, float64(float64(m-k)*x))
		run = max(run, v)
		out[k] = run
	}
}

// adjustHochberg writes Hochberg's step-up adjustment of the sorted p-values s into out
// (1-based j):
//
//	p̃_(i) = min_{j≥i} min(1, (m−j+1)·p_(j))
//
// (Hochberg 1988, Biometrika 75:800–802), a running minimum from the largest p.
func adjustHochberg(s, out []float64) {
	m := len(s)
	run := 1.0
	for k := m - 1; k >= 0; k-- {
		v := min(1, float64(float64(m-k)*s[k]))
		run = min(run, v)
		out[k] = run
	}
}

// adjustBenjaminiHochberg writes the Benjamini-Hochberg adjustment of the sorted p-values s into out
// (1-based j):
//
//	p̃_(i) = min_{j≥i} min(1, m·p_(j)/j)
//
// (Benjamini and Hochberg 1995, JRSS-B 57:289–300), a running minimum from the largest p.
func adjustBenjaminiHochberg(s, out []float64) {
	stepUpFDR(s, out, 1)
}

// adjustBenjaminiYekutieli writes the Benjamini-Yekutieli adjustment of the sorted p-values s into out
// (1-based j):
//
//	p̃_(i) = min_{j≥i} min(1, c(m)·m·p_(j)/j),   c(m) = Σ_{j=1}^m 1/j
//
// (Benjamini and Yekutieli 2001, Ann. Stat. 29:1165–1188, Theorem 1.3), valid under
// arbitrary dependence. c(m) is summed in increasing j so the result is reproducible.
func adjustBenjaminiYekutieli(s, out []float64) {
	c := 0.0
	for j := 1; j <= len(s); j++ {
		c += 1 / float64(j)
	}
	stepUpFDR(s, out, c)
}

// stepUpFDR writes min_{j≥i} min(1, c·m·p_(j)/j) into out for sorted s (1-based j), the
// common step-up form of the Benjamini-Hochberg (1995) and Benjamini-Yekutieli (2001)
// adjustments. Each term is computed as
//
//	p_(j) / ((j/m)/c)
//
// whose divisor is at most 1 (c ≥ 1), so no term rounds below its p_(j); m·p/j could
// (at j = m it can return p minus one ulp).
func stepUpFDR(s, out []float64, c float64) {
	m := len(s)
	fm := float64(m)
	run := 1.0
	for k := m - 1; k >= 0; k-- {
		v := min(1, s[k]/float64(float64(float64(k+1)/fm)/c))
		run = min(run, v)
		out[k] = run
	}
}

// adjustHommel writes Hommel's adjustment of the sorted p-values s into out. Hommel's
// procedure is closed testing with Simes' test (Hommel 1988, Biometrika 75:383–386;
// Simes 1986, Biometrika 73:751–754): p̃_(i) is the largest Simes p-value
//
//	P_I = min_{j=1..|I|} |I|·p_(j:I)/j
//
// over the index sets I that contain (i). It is computed in O(m²) in the form of
// Wright (1992, Biometrics 48:1005–1013): start from a = p_(·); for s = m down to 2 let
//
//	c_s = min_{j=1..s} s·p_(m−s+j)/j
//
// (the Simes p of the s largest p-values), set a_i ← max(a_i, c_s) for the s largest
// positions and a_i ← max(a_i, min(s·p_(i), c_s)) for the others; finally cap at 1.
func adjustHommel(s, out []float64) {
	m := len(s)
	copy(out, s)
	for size := m; size >= 2; size-- {
		fs := float64(size)
		top := s[m-size:]
		c := math.Inf(1)
		for j, x := range top {
			c = min(c, float64(float64(fs*x)/float64(j+1)))
		}
		for k := m - size; k < m; k++ {
			out[k] = max(out[k], c)
		}
		for k := 0; k < m-size; k++ {
			out[k] = max(out[k], min(float64(fs*s[k]), c))
		}
	}
	for k := range out {
		out[k] = min(out[k], 1)
	}
}
