// Package masks owns the Cartesian grid and the fields a solver reads from
// it, and writes and reads them in open formats: VTK XML ImageData (.vti),
// NumPy (.npy), Zarr, and a JSON manifest.
//
// Conventions:
//   - Lengths are in metres. Values are cell-centred: cell (i, j, k) spans
//     [Origin + (i, j, k) * Spacing, Origin + (i+1, j+1, k+1) * Spacing).
//   - Memory order is x fastest: the flat index of cell (i, j, k) is
//     i + nx*(j + ny*k), so NumPy sees shape (ny, nx) in 2D and (nz, ny, nx)
//     in 3D in C order. Vector fields interleave their components, so NumPy
//     sees (ny, nx, 2) or (nz, ny, nx, 3).
//   - A 2D grid has Dim 2 and Cells[2] == 1.
//
// The package knows nothing of where the fields came from.
package masks
