//go:build race

package choosek

// sweepRace is true when the race detector is on: the heavy sweep tests
// then run on a narrower range of k with fewer resamples, as the detector
// slows them down five to ten times.
const sweepRace = true
