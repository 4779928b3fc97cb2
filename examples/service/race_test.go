//go:build race

package main

// raceEnabled scales the load test down under the race detector.
const raceEnabled = true
