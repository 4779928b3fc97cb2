// Package f64 provides the float64 kernels of the nearest-center search:
// Best2, the fused two-best argmin over ‖c‖² − 2x·c, on centers packed in
// panels (see Best2 for the layout).
//
// # Layout
//
// The layout follows gonum's internal/asm: each kernel has one doc comment
// describing its loop. The pure-Go versions live in files without build
// tags (they are also the fallback on amd64 processors without the needed
// instructions); stubs_noasm.go, built with the tags noasm or purego or on
// any architecture other than amd64, calls them directly, and
// stubs_amd64.go declares the assembly versions and picks one at start-up
// from the processor's features. Other architectures (arm64 included) run
// the pure-Go code. A float32 package will sit beside this one with the
// same layout.
//
// # Invariants
//
// Kernels never allocate, never modify their inputs and write only the
// outputs their documentation names. They panic, with the messages below,
// only when slices are shorter than the documented lengths.
package f64
