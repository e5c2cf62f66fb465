//go:build race

package importers

// corpusRaceFactor scales the corpus time limit under the race detector,
// which slows code by 5-10x (Go documentation, "Data Race Detector").
const corpusRaceFactor = 10
