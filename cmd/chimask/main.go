// Command chimask turns CAD drawings into the fields an immersed-boundary or
// volume-penalization solver reads on its Cartesian grid, and checks that the
// fields are faithful to the drawing. See `chimask --help`.
package main

import "os"

func main() { os.Exit(run(os.Args[1:], os.Stdin, os.Stdout, os.Stderr)) }
