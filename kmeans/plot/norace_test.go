//go:build !race

package plot

// raceOn is true when the race detector is on (see race_test.go).
const raceOn = false
