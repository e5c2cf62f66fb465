package validate

import "chimask/importers"

// vfNewMeshCaster returns the caster MeshViewFactors uses for m: the mesh's
// bounding-volume hierarchy (importers.MeshIndex), O(log n) boxes per ray.
func vfNewMeshCaster(m *importers.Mesh) vfTriangleCaster {
	return importers.NewMeshIndex(m)
}
