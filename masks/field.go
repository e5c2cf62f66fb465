package masks

import "fmt"

// DType names the element type of a field as it is stored and written.
type DType string

// The element types a field may have. They map to NumPy's "<f8", "<f4",
// "<i4", "<u1" and VTK's Float64, Float32, Int32, UInt8.
const (
	Float64 DType = "float64"
	Float32 DType = "float32"
	Int32   DType = "int32"
	Uint8   DType = "uint8"
)

// Size returns the size in bytes of one element.
func (d DType) Size() int {
	switch d {
	case Float64:
		return 8
	case Float32, Int32:
		return 4
	case Uint8:
		return 1
	}
	return 0
}

// Field is one named array over the cells of a grid, x fastest, with
// Components values per cell interleaved. Exactly one of the slices is set,
// the one that matches DType.
type Field struct {
	Name       string // e.g. "solid_fraction"; also the .npy file stem
	Unit       string // "1" for dimensionless, "m", "1/m", "K"
	Meaning    string // one sentence for the manifest
	DType      DType
	Components int // 1, or the grid dimension for vectors

	F64 []float64
	F32 []float32
	I32 []int32
	U8  []uint8
}

// NewField allocates a zeroed field for g with the given element type and
// number of components.
func NewField(g Grid, name, unit, meaning string, dt DType, components int) *Field {
	n := g.NumCells() * components
	f := &Field{Name: name, Unit: unit, Meaning: meaning, DType: dt, Components: components}
	switch dt {
	case Float64:
		f.F64 = make([]float64, n)
	case Float32:
		f.F32 = make([]float32, n)
	case Int32:
		f.I32 = make([]int32, n)
	case Uint8:
		f.U8 = make([]uint8, n)
	default:
		panic(fmt.Sprintf("masks.NewField: unknown dtype %q", dt)) // a bug in the caller, not bad input
	}
	return f
}

// Len returns the number of elements (cells times components).
func (f *Field) Len() int {
	switch f.DType {
	case Float64:
		return len(f.F64)
	case Float32:
		return len(f.F32)
	case Int32:
		return len(f.I32)
	case Uint8:
		return len(f.U8)
	}
	return 0
}

// Surface is one row of the surfaces table: what a surface id in the
// surface_id field stands for.
type Surface struct {
	ID              int      `json:"id"`     // 1-based; 0 in a field means "no surface"
	Name            string   `json:"name"`   // display name
	Source          string   `json:"source"` // the layer, id or solid name it was matched from
	Emissivity      float64  `json:"emissivity"`
	WallTemperature *float64 `json:"wall_temperature_K"` // kelvin; nil when unset (NaN in the field)
	MaterialID      int      `json:"material_id"`        // 0 when none
}

// Material is one row of the materials table: the solid behind a surface.
// Nil properties were not given in the scene.
type Material struct {
	ID           int      `json:"id"` // 1-based
	Name         string   `json:"name"`
	Conductivity *float64 `json:"conductivity_W_per_mK"`
	Density      *float64 `json:"density_kg_per_m3"`
	HeatCapacity *float64 `json:"heat_capacity_J_per_kgK"`
}

// Mask is a grid with its fields and the tables that give their ids meaning.
type Mask struct {
	Grid      Grid
	Fields    []*Field
	Surfaces  []Surface
	Materials []Material
}

// Field returns the field called name, or nil.
func (m *Mask) Field(name string) *Field {
	for _, f := range m.Fields {
		if f.Name == name {
			return f
		}
	}
	return nil
}
