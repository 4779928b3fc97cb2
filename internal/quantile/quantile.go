package quantile

import (
	"cmp"
	"math"
	"slices"
)

// Panic messages (programmer misuse).
const (
	panicEmpty    = "quantile: no pairs"
	panicLevel    = "quantile: level outside [0, 1]"
	panicOrder    = "quantile: levels not in ascending order"
	panicLength   = "quantile: dst and levels differ in length"
	panicUnsorted = "quantile: pairs not sorted by value, or a value is NaN"
	panicWeight   = "quantile: weight negative, NaN or +Inf"
	panicTotal    = "quantile: weights sum to zero or overflow"
)

// Pair is one value and its weight.
type Pair struct {
	Value  float64
	Weight float64
}

// Sort orders pairs by ascending Value, in place and without allocating.
// The order of pairs with equal values is unspecified (it does not change
// a quantile) but deterministic: the same input gives the same order.
// NaN values sort first, where Of and Levels reject them.
func Sort(pairs []Pair) {
	slices.SortFunc(pairs, func(a, b Pair) int { return cmp.Compare(a.Value, b.Value) })
}

// Of returns Q(p) of the pairs, sorted by value (see the package
// documentation for the definition). It allocates nothing and does not
// modify sorted.
//
// It panics if sorted is empty, p is NaN or outside [0, 1], the pairs are
// not in ascending order of value or hold a NaN value, a weight is
// negative, NaN or +Inf, or the weights sum to zero or overflow.
func Of(p float64, sorted []Pair) float64 {
	checkLevel(p)
	target := p * total(sorted)
	var cum float64
	for _, e := range sorted {
		cum += e.Weight
		if cum >= target && e.Weight > 0 {
			return e.Value
		}
	}
	panic("quantile: unreachable: the cumulative weight reaches the total")
}

// Levels writes Q(levels[i]) of the pairs, sorted by value, into dst[i]
// for every i, in one scan, and returns dst. The levels must be in
// ascending order (equal levels are allowed). It allocates nothing and does
// not modify sorted or levels; dst[i] equals Of(levels[i], sorted) bit for
// bit.
//
// It panics if len(dst) != len(levels), a level is NaN or outside [0, 1],
// the levels are not ascending, or sorted is not valid as for Of (even when
// levels is empty).
func Levels(dst, levels []float64, sorted []Pair) []float64 {
	if len(dst) != len(levels) {
		panic(panicLength)
	}
	for i, p := range levels {
		checkLevel(p)
		if i > 0 && p < levels[i-1] {
			panic(panicOrder)
		}
	}
	w := total(sorted)
	next := 0
	var cum float64
	for _, e := range sorted {
		cum += e.Weight
		if e.Weight == 0 {
			continue
		}
		for next < len(levels) && cum >= levels[next]*w {
			dst[next] = e.Value
			next++
		}
		if next == len(levels) {
			break
		}
	}
	if next != len(levels) {
		panic("quantile: unreachable: the cumulative weight reaches the total")
	}
	return dst
}

// total checks the pairs and returns their total weight, summed in order.
func total(sorted []Pair) float64 {
	if len(sorted) == 0 {
		panic(panicEmpty)
	}
	if math.IsNaN(sorted[0].Value) {
		panic(panicUnsorted)
	}
	var w float64
	for i, e := range sorted {
		if i > 0 && !(sorted[i-1].Value <= e.Value) {
			panic(panicUnsorted)
		}
		if !(e.Weight >= 0) || math.IsInf(e.Weight, 1) {
			panic(panicWeight)
		}
		w += e.Weight
	}
	if !(w > 0) || math.IsInf(w, 1) {
		panic(panicTotal)
	}
	return w
}

// checkLevel panics unless 0 ≤ p ≤ 1.
func checkLevel(p float64) {
	if !(p >= 0 && p <= 1) {
		panic(panicLevel)
	}
}
