//go:build !race

package main

// corpusRaceFactor scales time limits; 1 without the race detector.
const corpusRaceFactor = 1
