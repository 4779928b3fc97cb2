//go:build !race

package choosek

// sweepRace is true when the race detector is on (see sweep_race_test.go).
const sweepRace = false
