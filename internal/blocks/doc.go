// Package blocks splits rows into fixed blocks and runs work over them on a
// number of goroutines. The split depends only on the number of rows, never
// on the number of goroutines, so sums taken block by block and then added
// in block order give the same bits on any number of workers. kmeans and
// seeding both rely on this for their determinism.
package blocks
