//go:build race

package main

// corpusRaceFactor scales time limits under the race detector, which slows
// code by 5-10x (Go documentation, "Data Race Detector").
const corpusRaceFactor = 10
