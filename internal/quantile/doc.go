// Package quantile computes weighted sample quantiles by one definition,
// the one every package of the module uses: the inverse of the weighted
// empirical distribution function.
//
// # Definition
//
// Let x₍₁₎ ≤ … ≤ x₍ₘ₎ be the values of positive weight in ascending order,
// w₍ᵢ₎ their weights, Cᵢ = w₍₁₎ + … + w₍ᵢ₎ the cumulative weights and
// W = Cₘ the total. For 0 ≤ p ≤ 1,
//
//	Q(p) = x₍ₖ₎,  k the smallest i with Cᵢ ≥ p·W.
//
// Q always returns one of the values (no interpolation): Q(0) is the
// smallest and Q(1) the largest value of positive weight. With unit weights
// Q(p) is the ⌈p·n⌉-th smallest of the n values (the smallest for p = 0),
// definition 1 of R. J. Hyndman and Y. Fan, "Sample quantiles in
// statistical packages", The American Statistician 50(4), 1996: the median
// of 1, 2, 3, 4 is 2, its quartiles 1 and 3. Integer weights act exactly as
// repeated values. It is what gonum's stat.Quantile(p, stat.Empirical, x, w)
// computes, with two differences at the edges: W is summed here in sorted
// order, the order of the Cᵢ, so that C reaches p·W for every p ≤ 1 without
// a fallback (gonum sums W in another order; the results differ only when
// p·W lies within rounding of some Cᵢ, which integer and other dyadic
// weights never cause); and values of weight zero are never returned (gonum
// returns a leading value of weight zero for p = 0).
//
// # Use
//
// Callers collect (value, weight) pairs in a buffer they own, order them
// with [Sort] and read one level with [Of] or several in one scan with
// [Levels]. Nothing allocates; the pairs are read, never modified, by Of and
// Levels. Pairs of weight zero may stay in the buffer: they never change
// the result.
//
// # Panics
//
// These are low-level helpers: bad arguments are programmer misuse and
// panic, as documented on each function (no pairs, a level outside [0, 1]
// or NaN, pairs out of order or holding a NaN value, a weight that is
// negative, NaN or +Inf, weights that sum to zero or overflow, or dst and
// levels of different lengths). Callers validate user input first and
// return errors.
package quantile
