// Package seeding picks the initial centers that k-means starts from.
//
// A Seeder writes k centers into a k×d dst from n×d data with optional
// per-row weights. Three seeders are provided:
//
//	seeder     centers                                      time              extra memory
//	Random     k distinct rows, drawn by weight             O(n·d) expected   n float64
//	Uniform    k points uniform in the rows' bounding box   O(n·d + k·d)      O(k·d)
//	PlusPlus   k-means++ (Arthur & Vassilvitskii 2007),     O(n·d·k·L)        n float64
//	           greedy with L candidates per step, one       (parallel)
//	           pass over the data per step
//
// PlusPlus is the usual choice: for the within-cluster sum of squares the
// paper proves that classic k-means++ seeding alone is O(log k)-competitive
// with the optimum in expectation. Random is cheaper but may put
// several centers in one dense region; Uniform ignores where the rows are
// and is mostly useful as a baseline.
//
// # Float32 data
//
// Every seeder here also implements Float32Seeder: SeedFloat32 reads
// float32 rows in place (a kmeans.Dense32 without a scaler) and gives
// exactly the centers Seed gives on their float64 conversion. Its extra
// memory is that of Seed, plus for PlusPlus 2·d float64 per block and d
// per candidate, and for Random and Uniform the k rows they keep.
//
// # Weights
//
// A weight acts as a multiplicity: a row of weight 3 is drawn as often as
// three copies of it with weight 1. Nil weights mean all ones. Rows of zero
// weight are never chosen and do not span Uniform's box; negative, NaN or
// infinite weights, or all zero, are rejected with ErrWeights.
//
// # Invariants
//
// Seeders never modify data or weights and read data through its backing
// array (honouring the stride) without copying it. They never return two
// equal centers: when data holds fewer than k distinct rows of positive
// weight they return an error wrapping ErrK. Bad input returns an error
// wrapping ErrShape, ErrK, ErrWeights, ErrParameter or a sentinel of package
// distance (a NaN, infinite or, under Cosine, zero row); it never panics. On
// error dst is left unchanged.
//
// # Determinism
//
// All randomness comes from the *rand.Rand passed to Seed: the same data,
// weights, metric and generator state give bit-identical centers. This holds
// for any PlusPlus.Workers: PlusPlus splits the rows into fixed blocks that
// depend only on n and adds the blocks' partial sums in block order.
//
// # Concurrency
//
// The seeders are plain values with no state; they are safe for concurrent
// use by multiple goroutines as long as each call has its own dst and rnd.
// Random and Uniform run on the calling goroutine; PlusPlus spreads each
// pass over the data on PlusPlus.Workers goroutines (1 by default) and
// returns only when they are done.
package seeding
