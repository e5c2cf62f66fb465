//go:build !race

package importers

// corpusRaceFactor scales the corpus time limit; 1 without the race detector.
const corpusRaceFactor = 1
