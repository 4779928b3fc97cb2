// Package synth generates the seeded synthetic data of centroid's
// benchmarks: Gaussian blobs, the same rows for the same arguments on every
// run and machine.
//
// The data is invented for measuring speed; it stands for nothing real.
package synth
