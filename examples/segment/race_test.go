//go:build race

package main

// raceOn is true when the race detector is on: TestRunDefaults is then
// skipped (TestRun covers the same code on a smaller network).
const raceOn = true
