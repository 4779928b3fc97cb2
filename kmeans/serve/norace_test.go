//go:build !race

package serve

// raceEnabled scales the load test down under the race detector.
const raceEnabled = false
