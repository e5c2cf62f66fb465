package main

import (
	"fmt"
	"path"

	"chimask/masks"
)

// defaultEmissivity is given to a surface the scene does not describe: a
// black wall, the conservative choice for emission (documented in the README).
const defaultEmissivity = 1.0

// surfaceTable maps the geometry's surface names to rows of the surfaces
// table. perIndex[s] is the row for geometry surface index s; rows lists the
// distinct rows by id. The first [[surface]] entry whose pattern matches a
// name wins; names no entry matches get a row of their own with default
// properties. A pattern that matches no name is an error naming its line.
func surfaceTable(sc *Scene, names []string) (perIndex []masks.Surface, rows []masks.Surface, mats []masks.Material, err error) {
	matID := map[string]int{}
	for i, m := range sc.Materials {
		matID[m.Name] = i + 1
		mats = append(mats, masks.Material{ID: i + 1, Name: m.Name, Conductivity: m.Conductivity, Density: m.Density, HeatCapacity: m.HeatCapacity})
	}
	owner := make([]int, len(names)) // scene entry index per name, -1 when unmatched
	used := make([]bool, len(sc.Surfaces))
	for n, name := range names {
		owner[n] = -1
		for i, s := range sc.Surfaces {
			if ok, _ := path.Match(s.Match, name); ok {
				owner[n] = i
				used[i] = true
				break
			}
		}
	}
	for i, s := range sc.Surfaces {
		if !used[i] {
			return nil, nil, nil, sc.errAt(fmt.Sprintf("surface pattern %q matches none of the geometry's surfaces %q", s.Match, names),
				"match a layer (DXF), an id or class (SVG) or a solid name (STL); run `chimask inspect` on the drawing to list them", "surface", i, "match")
		}
	}
	rowOfEntry := make([]int, len(sc.Surfaces))
	for i := range rowOfEntry {
		rowOfEntry[i] = -1
	}
	perIndex = make([]masks.Surface, len(names))
	for n, name := range names {
		if i := owner[n]; i >= 0 {
			if rowOfEntry[i] < 0 {
				s := sc.Surfaces[i]
				row := masks.Surface{ID: len(rows) + 1, Name: s.Name, Source: s.Match, Emissivity: defaultEmissivity, WallTemperature: s.Temperature}
				if row.Name == "" {
					row.Name = s.Match
				}
				if s.Emissivity != nil {
					row.Emissivity = *s.Emissivity
				}
				row.MaterialID = matID[s.Material]
				rows = append(rows, row)
				rowOfEntry[i] = len(rows) - 1
			}
			perIndex[n] = rows[rowOfEntry[i]]
			continue
		}
		row := masks.Surface{ID: len(rows) + 1, Name: name, Source: name, Emissivity: defaultEmissivity}
		rows = append(rows, row)
		perIndex[n] = row
	}
	return perIndex, rows, mats, nil
}
