// Package voxelize turns geometry (an importers.Outline in 2D, an
// importers.Mesh in 3D) into the standard fields of a masks.Mask: solid
// fraction, indicator, signed distance, normals, interface density, region
// label and surface tags.
//
// Conventions: lengths in metres; signed distance negative in solid and
// positive in fluid; normals point from solid into fluid. Work is split into
// a fixed set of grid blocks (or rows in 2D) and spread over a worker pool;
// the result is bit-for-bit the same for any number of workers.
package voxelize
