// Package nearest finds the nearest of k centers for blocks of rows under
// the squared Euclidean distance, by the expansion
//
//	‖x−c‖² = ‖x‖² + (‖c‖² − 2x·c)
//
// where ‖x‖² is constant per row, so the argmin over c only needs the dot
// products x·c and the squared norms ‖c‖², computed once per set of centers.
// This is the same arithmetic as a matrix product of the rows with the
// transposed centers, with the argmin fused into it: no n×k matrix is ever
// written.
//
// # Layout
//
// The layout follows gonum's internal/asm: one documented kernel, Best2,
// declared in stubs.go with a pure-Go fallback, best2Go, in best2.go. A SIMD
// version slots in by moving the declaration in stubs.go behind build tags
// (stubs_noasm.go) and adding stubs_amd64.go with the assembly declaration;
// the tests compare Best2 with best2Go and with a direct computation.
//
// # Exactness
//
// The expansion cancels when rows and centers lie far from the origin. Centers
// therefore shifts rows and centers by a common vector (the mean of the
// centers) before the dot products, and Searcher.Slack gives, per row, a
// rounding bound T such that every approximate squared distance differs from
// both the true squared distance and the directly computed one (any
// summation order of Σ(x_i−c_i)²) by at most T. Searcher.Assign accepts the
// kernel's argmin only when the second best value exceeds the best by more
// than 2T; otherwise it recomputes the row directly, so its answer is always
// exactly the argmin of the direct computation, the lowest index on ties.
// See Centers.Pack for the derivation of T.
//
// # Invariants
//
// Inputs are never modified; outputs are named dst or are fields of the
// Searcher. Nothing allocates once the buffers have grown to the largest
// block. A packed Centers is read-only and may be shared by concurrent
// Searchers; a Searcher belongs to one goroutine.
package nearest
