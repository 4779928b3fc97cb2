// Package nearest finds the nearest of k centers: for blocks of rows in
// training (Searcher, under the squared Euclidean distance) and for one
// row at a time in serving (Set, under the squared Euclidean or the
// Manhattan distance). Both return exactly the answer of a direct scan
// with the distance package's functions, the lowest index on ties.
//
// # Training: the expansion
//
// Searcher uses
//
//	‖x−c‖² = ‖x‖² + (‖c‖² − 2x·c)
//
// where ‖x‖² is constant per row, so the argmin over c only needs the dot
// products x·c and the squared norms ‖c‖², computed once per set of centers
// (Centers). This is the arithmetic of a matrix product of the rows with the
// transposed centers, with the argmin fused into it: no n×k matrix is ever
// written. The kernel, f64.Best2 in internal/asm/f64, runs in assembly
// where the processor allows it. Searcher32 does the same for float32
// rows with f32.Best2 (internal/asm/f32: float32 products and sums) and
// its own bound (Centers32, Rounding.Slack32); a row whose float32 answer
// is not certain is measured by the float64 one-row kernel and, if still
// close, directly, so its answers are those of Searcher on the rows'
// float64 values. SqDist and AbsDist give the distance package's bits for
// rows of either width.
//
// The expansion cancels when rows and centers lie far from the origin.
// Centers therefore shifts rows and centers by a common vector (the mean of
// the centers) before the dot products, and Rounding.Slack gives, per row,
// a rounding bound T such that every approximate squared distance differs
// from both the true squared distance and the directly computed one (any
// summation order of Σ(x_i−c_i)²) by at most T. Searcher.Assign accepts the
// kernel's argmin only when the second best value exceeds the best by more
// than 2T; otherwise it recomputes the row directly, so its answer is always
// exactly the argmin of the direct computation. See Centers.Pack for the
// derivation of T.
//
// # Serving: one row at a time
//
// Set runs the one-row kernel f64.Best2Row under the squared Euclidean
// distance, with the same rounding bound and a direct recheck, and
// otherwise measures every center with the distance package's own
// arithmetic, several centers interleaved; see Set for the pruned
// searches these replaced and why.
//
// # Rounding
//
// Rounding is the one rounding argument of the project: the bound solvers
// of kmeans (Elkan, Hamerly, Yinyang) round their distance bounds outwards
// with it, and Searcher's slack is derived from the same error model.
//
// # Invariants
//
// Inputs are never modified. Nothing allocates once the buffers have grown
// to the largest block. A packed Centers and a Set are read-only and may
// be shared by concurrent goroutines; a Searcher belongs to one goroutine.
package nearest
