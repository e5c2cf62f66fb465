// Package importers reads CAD drawings (DXF and SVG outlines in 2D, STL
// meshes in 3D) into a neutral geometric model in metres: Drawing (flattened
// polylines as they appear in the file), Outline (closed, oriented loops that
// bound solid regions) and Mesh (indexed triangles).
//
// Conventions:
//   - Every coordinate is in metres. A reader converts from the file's unit,
//     or from the unit the caller states, which wins over the file.
//   - Loops of an Outline run counter-clockwise around solid: the solid lies
//     to the left of every edge, so outer boundaries are counter-clockwise and
//     holes clockwise, and the signed area of an Outline is its solid area.
//   - Triangles of a Mesh are wound counter-clockwise seen from outside: the
//     right-hand normal points from solid into fluid.
//   - Surfaces are named by the file (DXF layer, SVG id/class/group id, STL
//     solid name); every edge and triangle carries the index of its surface.
//
// The package knows nothing of grids, cells or output formats. Bad input is
// reported as *InputError naming the file and the line, entity or byte offset.
package importers
