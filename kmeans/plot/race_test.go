//go:build race

package plot

// raceOn is true when the race detector is on: the file tests then draw
// fewer pictures, as the detector slows text rendering down ten times.
const raceOn = true
