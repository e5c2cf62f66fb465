package masks

// Names of the fields every build writes. They are a contract with solvers
// and scripts: the .npy files are called <name>.npy and the VTI arrays carry
// the same names.
const (
	SolidFraction    = "solid_fraction"    // float64: fraction of the cell's area (2D) or volume (3D) inside solid, in [0, 1]
	Indicator        = "indicator"         // float32: 1 where the cell centre is in solid, else 0; smoothed across the interface when asked
	SignedDistance   = "signed_distance"   // float32, m: distance to the geometry, negative in solid, positive in fluid, clamped beyond the band
	Normal           = "normal"            // float32 x dim: unit normal from solid into fluid at the closest point, on interface cells; zero elsewhere
	InterfaceDensity = "interface_density" // float32, 1/m: interface length (2D) or area (3D) inside the cell per cell area or volume
	Region           = "region"            // uint8: RegionFluid, RegionInterface or RegionSolid
	SurfaceID        = "surface_id"        // int32: id of the nearest surface (surfaces table), 0 when there is no geometry
	Emissivity       = "emissivity"        // float32: emissivity of the nearest surface
	WallTemperature  = "wall_temperature"  // float32, K: wall temperature of the nearest surface, NaN when the scene leaves it unset
	MaterialID       = "material_id"       // int32: material of the nearest surface (materials table), 0 when none
)

// Values of the region field.
const (
	RegionFluid     uint8 = 0
	RegionInterface uint8 = 1
	RegionSolid     uint8 = 2
)

// NewStandardFields allocates the ten standard fields for g, zeroed, in the
// order they are written. Their units and meanings go into the manifest.
func NewStandardFields(g Grid) []*Field {
	return []*Field{
		NewField(g, SolidFraction, "1", "fraction of the cell inside solid (exact for the flattened outline in 2D, plane-cut from the local surface in 3D)", Float64, 1),
		NewField(g, Indicator, "1", "1 where the cell centre lies in solid, 0 in fluid; smoothed over the interface when the scene asks for it", Float32, 1),
		NewField(g, SignedDistance, "m", "signed distance from the cell centre to the geometry, negative in solid, positive in fluid; exact within the band, clamped to +/- the band half-width beyond it", Float32, 1),
		NewField(g, Normal, "1", "unit normal from solid into fluid at the geometry's closest point, on interface cells; zero elsewhere", Float32, g.Dim),
		NewField(g, InterfaceDensity, "1/m", "interface length (2D) or area (3D) inside the cell divided by the cell area (2D) or volume (3D)", Float32, 1),
		NewField(g, Region, "1", "0 fluid, 1 interface, 2 solid", Uint8, 1),
		NewField(g, SurfaceID, "1", "id of the nearest surface in the surfaces table, 0 when there is none", Int32, 1),
		NewField(g, Emissivity, "1", "hemispherical total emissivity of the nearest surface", Float32, 1),
		NewField(g, WallTemperature, "K", "wall temperature of the nearest surface; NaN where the scene leaves it unset", Float32, 1),
		NewField(g, MaterialID, "1", "id of the nearest surface's solid material in the materials table, 0 when none", Int32, 1),
	}
}
