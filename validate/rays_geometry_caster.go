package validate

import "chimask/importers"

// vfNewMeshCaster returns the caster MeshViewFactors uses for m.
func vfNewMeshCaster(m *importers.Mesh) vfTriangleCaster {
	return vfNewBruteCaster(m)
}
