package importers

import (
	"errors"
	"fmt"
	"io"
	"strings"

	"gonum.org/v1/gonum/spatial/r2"
)

// ReadDXF reads an ASCII DXF drawing's model-space outline entities into a Drawing in metres.
//
// It reads LINE, ARC, CIRCLE, LWPOLYLINE (with bulge arcs), 2D POLYLINE,
// ELLIPSE, SPLINE (NURBS, or fit points only) and INSERT/MINSERT of blocks
// (nested, scaled, mirrored, rotated) from the ENTITIES section, skipping
// paper-space (group 67 = 1) and invisible (group 60 = 1) entities. Each
// entity becomes one Polyline in fill group 0 (Drawing.FillRules is
// [EvenOdd]) whose Surface is the entity's layer; an entity of a block on
// layer "0" takes the layer of the INSERT that places it. Curves are
// flattened so that no chord is farther than opts.ChordTolerance from the
// curve (arcs by the sagitta formula, splines by adaptive bisection);
// closed entities give Closed polylines that do not repeat their first
// point. Entities with extrusion (0,0,-1) are mapped through the DXF
// arbitrary-axis algorithm (x -> -x); other tilted entities, 3D polylines
// and meshes are skipped with a warning. TEXT, HATCH, DIMENSION and other
// non-outline kinds are counted in Drawing.Skipped. Drawing.Warnings also
// names off or frozen layers that hold outline geometry.
//
// The length unit is opts.Unit when given, else $INSUNITS of the HEADER
// (1 in, 2 ft, 4 mm, 5 cm, 6 m, 13 um, 14 dm); a file that declares none,
// read without opts.Unit, is an error. Coordinates beyond 1e12 drawing
// units, NaN, damaged group codes, truncation, unknown or recursive blocks,
// nesting deeper than opts.MaxDepth and binary DXF return *InputError with
// the 1-based line. Time and memory are linear in the file size, the
// output being bounded by caps of 2^23 points, 2^22 placed block entities
// and 2^18 chords per curve; a drawing beyond them is an *InputError that
// suggests a coarser tolerance.
func ReadDXF(r io.Reader, name string, opts ReadOptions) (*Drawing, error) {
	rd := dxfNewReader(r, name)
	if err := rd.checkStart(); err != nil {
		return nil, err
	}
	f := &dxfFile{name: name, blocks: map[string]*dxfBlock{}}
	if err := f.parse(rd); err != nil {
		return nil, err
	}
	d := &Drawing{File: name, Format: "dxf", FillRules: []FillRule{EvenOdd}, Skipped: map[string]int{}}
	d.Warnings = append(d.Warnings, f.warnings...)
	scale, err := f.resolveUnit(d, opts)
	if err != nil {
		return nil, err
	}
	em := &dxfEmitter{name: name, f: f, d: d, opts: opts, metres: scale, tol: opts.chordTolerance() / scale}
	if err := em.run(); err != nil {
		return nil, err
	}
	return d, nil
}

// dxfBlock is one BLOCK definition.
type dxfBlock struct {
	name     string
	base     r2.Vec
	line     int
	xref     bool
	entities []*dxfEntity
}

// dxfFile is what the parse pass collected from a file.
type dxfFile struct {
	name        string
	insUnits    int
	insUnitLine int
	entities    []*dxfEntity
	blocks      map[string]*dxfBlock // by upper-case name; DXF block names ignore case
	layers      []dxfLayer           // LAYER table entries, in file order
	warnings    []string
	dropped     int       // parse warnings beyond dxfMaxWarnings
	pairs       []dxfPair // reused buffer for one entity's pairs
}

// warn records a parse warning; past dxfMaxWarnings they are only counted.
func (f *dxfFile) warn(msg string) {
	if len(f.warnings) >= dxfMaxWarnings {
		f.dropped++
		return
	}
	f.warnings = append(f.warnings, msg)
}

// truncated reports a file that ends inside a section.
func (f *dxfFile) truncated(rd *dxfReader, inside string) error {
	return &InputError{File: f.name, Line: rd.line, Offset: -1,
		What: fmt.Sprintf("the file ends inside %s; expected ENDSEC and EOF", inside),
		Hint: "the file is truncated; export it again"}
}

// expected reports a pair that is not the one that must come next.
func (f *dxfFile) expected(p dxfPair, want string) error {
	return &InputError{File: f.name, Line: p.line, Offset: -1,
		What: fmt.Sprintf("found group %d %q, expected %s", p.code, dxfClip([]byte(p.val)), want),
		Hint: "the file is damaged or not ASCII DXF; export it again"}
}

// next reads a pair, skipping 999 comments; io.EOF inside a section
// becomes a truncation error.
func (f *dxfFile) next(rd *dxfReader, inside string) (dxfPair, error) {
	for {
		p, err := rd.next()
		if errors.Is(err, io.EOF) {
			if inside == "" {
				return p, io.EOF
			}
			return p, f.truncated(rd, inside)
		}
		if err != nil || p.code != 999 {
			return p, err
		}
	}
}

// parse reads the sections of the file.
func (f *dxfFile) parse(rd *dxfReader) error {
	sawSection := false
	for {
		p, err := f.next(rd, "")
		if errors.Is(err, io.EOF) {
			if !sawSection {
				return &InputError{File: f.name, Line: rd.line, Offset: -1,
					What: "no SECTION found; expected ASCII DXF (pairs of group code and value lines)",
					Hint: "check that the file is a DXF drawing; export it again as ASCII DXF"}
			}
			f.warn(fmt.Sprintf("line %d: the file ends without EOF; read what it holds", rd.line))
			return nil
		}
		if err != nil {
			return err
		}
		if p.code != 0 {
			return f.expected(p, `group 0 "SECTION" or "EOF"`)
		}
		switch strings.ToUpper(p.val) {
		case "EOF":
			return nil
		case "SECTION":
		default:
			return f.expected(p, `group 0 "SECTION" or "EOF"`)
		}
		sawSection = true
		np, err := f.next(rd, "a SECTION")
		if err != nil {
			return err
		}
		if np.code != 2 {
			return f.expected(np, "group 2 with the section name")
		}
		inside := "the " + np.val + " section"
		switch strings.ToUpper(np.val) {
		case "HEADER":
			err = f.parseHeader(rd, inside)
		case "ENTITIES":
			var ents []*dxfEntity
			ents, err = f.parseEntities(rd, inside, "ENDSEC")
			f.entities = append(f.entities, ents...)
		case "BLOCKS":
			err = f.parseBlocks(rd, inside)
		case "TABLES":
			err = f.parseTables(rd, inside)
		default:
			err = f.skipSection(rd, inside)
		}
		if err != nil {
			return err
		}
	}
}

// skipSection consumes pairs up to and including "0 ENDSEC".
func (f *dxfFile) skipSection(rd *dxfReader, inside string) error {
	err := rd.skipUntil("ENDSEC")
	if errors.Is(err, io.EOF) {
		return f.truncated(rd, inside)
	}
	return err
}

// dxfLayer is one entry of the LAYER table.
type dxfLayer struct {
	name        string
	line        int
	off, frozen bool
}

// parseTables reads the LAYER table (name, group 70 bit 1 frozen, negative
// colour 62 = off; DXF reference, LAYER table) and skips the other tables.
func (f *dxfFile) parseTables(rd *dxfReader, inside string) error {
	var cur *dxfLayer
	for {
		p, err := f.next(rd, inside)
		if err != nil {
			return err
		}
		if p.code == 0 {
			if cur != nil {
				f.layers = append(f.layers, *cur)
				cur = nil
			}
			switch strings.ToUpper(p.val) {
			case "ENDSEC":
				return nil
			case "LAYER":
				cur = &dxfLayer{line: p.line}
			}
			continue
		}
		if cur == nil {
			continue
		}
		switch p.code {
		case 2:
			cur.name = dxfText(p.val)
		case 70, 62:
			n, err := dxfInt(f.name, "LAYER "+cur.name, p)
			if err != nil {
				return err
			}
			if p.code == 70 {
				cur.frozen = n&1 != 0
			} else {
				cur.off = n < 0
			}
		}
	}
}

// parseHeader reads $INSUNITS and skips every other header variable.
func (f *dxfFile) parseHeader(rd *dxfReader, inside string) error {
	v := ""
	for {
		p, err := f.next(rd, inside)
		if err != nil {
			return err
		}
		switch {
		case p.code == 0 && strings.EqualFold(p.val, "ENDSEC"):
			return nil
		case p.code == 0:
			return f.expected(p, "header variables (group 9) or ENDSEC")
		case p.code == 9:
			v = strings.ToUpper(p.val)
		case v == "$INSUNITS" && p.code == 70:
			n, err := dxfInt(f.name, "$INSUNITS", p)
			if err != nil {
				return err
			}
			f.insUnits, f.insUnitLine = n, p.line
		}
	}
}

// collect reads the pairs of one entity up to the next code 0, which stays
// unread.
func (f *dxfFile) collect(rd *dxfReader, inside string) ([]dxfPair, error) {
	f.pairs = f.pairs[:0]
	for {
		p, err := rd.peek()
		if errors.Is(err, io.EOF) {
			return nil, f.truncated(rd, inside)
		}
		if err != nil {
			return nil, err
		}
		if p.code == 0 {
			return f.pairs, nil
		}
		_, _ = rd.next()
		if p.code != 999 {
			f.pairs = append(f.pairs, p)
		}
	}
}

// parseEntities reads entities up to "0 end" (ENDSEC or ENDBLK), joining
// each POLYLINE with its VERTEX entities.
func (f *dxfFile) parseEntities(rd *dxfReader, inside, end string) ([]*dxfEntity, error) {
	var out []*dxfEntity
	for {
		p, err := f.next(rd, inside)
		if err != nil {
			return nil, err
		}
		if p.code != 0 {
			return nil, f.expected(p, "group 0 starting an entity")
		}
		kind := strings.ToUpper(p.val)
		switch {
		case kind == end:
			return out, nil
		case kind == "ENDSEC" || kind == "EOF" || kind == "SECTION":
			return nil, f.expected(p, end+" before "+kind)
		}
		pairs, err := f.collect(rd, inside)
		if err != nil {
			return nil, err
		}
		e, err := dxfDecode(f.name, kind, p.line, pairs)
		if err != nil {
			return nil, err
		}
		switch kind {
		case "SEQEND":
			continue // closes attributes of an INSERT; a POLYLINE's is consumed below
		case "VERTEX":
			f.warn(e.where() + ": VERTEX outside a POLYLINE ignored")
			continue
		case "POLYLINE":
			if err := f.parseVertices(rd, inside, e); err != nil {
				return nil, err
			}
		}
		out = append(out, e)
	}
}

// parseVertices reads the VERTEX entities after POLYLINE e, and its SEQEND.
func (f *dxfFile) parseVertices(rd *dxfReader, inside string, e *dxfEntity) error {
	for {
		p, err := rd.peek()
		if errors.Is(err, io.EOF) {
			return f.truncated(rd, inside)
		}
		if err != nil {
			return err
		}
		kind := strings.ToUpper(p.val)
		if kind != "VERTEX" && kind != "SEQEND" {
			f.warn(e.where() + ": POLYLINE without SEQEND")
			return nil
		}
		_, _ = rd.next()
		pairs, err := f.collect(rd, inside)
		if err != nil {
			return err
		}
		if kind == "SEQEND" {
			return nil
		}
		v, err := dxfDecode(f.name, kind, p.line, pairs)
		if err != nil {
			return err
		}
		if v.flags&16 != 0 {
			continue // a spline frame control point, not on the curve
		}
		e.verts = append(e.verts, dxfVertex{p: v.center, bulge: v.radius})
	}
}

// parseBlocks reads BLOCK ... ENDBLK definitions.
func (f *dxfFile) parseBlocks(rd *dxfReader, inside string) error {
	for {
		p, err := f.next(rd, inside)
		if err != nil {
			return err
		}
		switch {
		case p.code == 0 && strings.EqualFold(p.val, "ENDSEC"):
			return nil
		case p.code != 0 || !strings.EqualFold(p.val, "BLOCK"):
			return f.expected(p, "BLOCK or ENDSEC")
		}
		pairs, err := f.collect(rd, inside)
		if err != nil {
			return err
		}
		b := &dxfBlock{line: p.line}
		for _, q := range pairs {
			switch q.code {
			case 2:
				b.name = q.val
			case 10, 20:
				v, err := dxfFloat(f.name, "BLOCK "+b.name, q, dxfMaxCoord)
				if err != nil {
					return err
				}
				if q.code == 10 {
					b.base.X = v
				} else {
					b.base.Y = v
				}
			case 70:
				n, err := dxfInt(f.name, "BLOCK "+b.name, q)
				if err != nil {
					return err
				}
				b.xref = n&(4|8) != 0
			}
		}
		b.entities, err = f.parseEntities(rd, "block "+b.name, "ENDBLK")
		if err != nil {
			return err
		}
		if _, err := f.collect(rd, inside); err != nil { // ENDBLK's own groups
			return err
		}
		key := strings.ToUpper(b.name)
		if _, dup := f.blocks[key]; dup {
			f.warn(fmt.Sprintf("line %d: block %q defined twice; the first definition is used", b.line, b.name))
			continue
		}
		f.blocks[key] = b
	}
}

// dxfInsUnits maps $INSUNITS codes to unit names UnitScale knows (DXF
// reference, header variables; codes from memory).
var dxfInsUnits = map[int]string{1: "in", 2: "ft", 4: "mm", 5: "cm", 6: "m", 13: "um", 14: "dm"}

// dxfInsUnitsOther names the $INSUNITS codes that are declared but not
// supported (DXF reference, from memory).
var dxfInsUnitsOther = map[int]string{3: "miles", 7: "km", 8: "microinches", 9: "mils", 10: "yards",
	11: "angstroms", 12: "nm", 15: "decametres", 16: "hectometres", 17: "gigametres",
	18: "astronomical units", 19: "light years", 20: "parsecs"}

// resolveUnit sets d.FileUnit and d.Unit and returns metres per drawing unit.
func (f *dxfFile) resolveUnit(d *Drawing, opts ReadOptions) (float64, error) {
	if u, ok := dxfInsUnits[f.insUnits]; ok {
		d.FileUnit = u
	} else if f.insUnits != 0 {
		what, ok := dxfInsUnitsOther[f.insUnits]
		if !ok {
			what = "an unknown code"
		}
		d.Warnings = append(d.Warnings, fmt.Sprintf("line %d: $INSUNITS = %d (%s) is not a supported unit; it is ignored",
			f.insUnitLine, f.insUnits, what))
	}
	d.Unit = d.FileUnit
	if opts.Unit != "" {
		d.Unit = opts.Unit
	}
	if d.Unit == "" {
		return 0, &InputError{File: f.name, Line: f.insUnitLine, Offset: -1,
			What: "the drawing declares no supported length unit ($INSUNITS is missing, 0 or unsupported)",
			Hint: `state the unit: units = "mm" in the scene file, or --units mm on the command line`}
	}
	s, err := UnitScale(d.Unit)
	if err != nil {
		return 0, &InputError{File: f.name, Offset: -1, What: err.Error(),
			Hint: `give a known unit, e.g. units = "mm" or --units mm`}
	}
	return s, nil
}
