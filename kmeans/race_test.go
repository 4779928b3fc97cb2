//go:build race

package kmeans

// raceOn is true under the race detector, which slows the heavy
// reference tests down five to ten times: they then run fewer seeds.
const raceOn = true
