// Package validate checks a mask against the geometry it came from: thin
// walls, gaps and leaks, conservation of area and volume, and the radiation
// a solver will see through it (ray-cast view factors, gray-diffuse
// net-radiation heat balances, a smoothed factor matrix).
//
// Conventions:
//   - Lengths are in metres and angles in radians. In 2D every surface is
//     infinitely long: "areas" are lengths (m) and heat rates are per metre
//     of depth (W/m); in 3D areas are m^2 and heat rates W.
//   - Normals point from solid into fluid; the signed distance is negative in
//     solid. An Outline edge p->q has the solid on its left, so its fluid-side
//     normal is (q-p) rotated by -90 degrees; a Mesh triangle (a, b, c) has
//     the fluid-side normal (b-a)x(c-a).
//   - View-factor matrices have one row per emitting surface, in ascending
//     surface id order, and one column per receiving surface in the same
//     order plus a last column "open" for rays that leave the domain.
//   - Monte Carlo estimates are reproducible: rays are split into a fixed
//     sequence of blocks, block b draws from rand.New(rand.NewPCG(seed,
//     uint64(b))), and counts are reduced in block order, so the result does
//     not depend on the number of workers.
package validate
