//go:build !race

package kmeans

// raceOn is true under the race detector (see race_test.go).
const raceOn = false
