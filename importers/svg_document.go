package importers

import (
	"bufio"
	"encoding/xml"
	"errors"
	"fmt"
	"io"
	"maps"
	"strings"
)

const (
	svgNS   = "http://www.w3.org/2000/svg"
	xlinkNS = "http://www.w3.org/1999/xlink"
	// svgMaxEntityValue caps the replacement text of an entity declared in
	// the DOCTYPE. Editors declare namespace URLs there (under 64 bytes); a
	// cap keeps "&e;" repeated through a file from multiplying its size.
	svgMaxEntityValue = 64
	// svgMaxEntities caps how many DOCTYPE entities are honoured.
	svgMaxEntities = 256
)

// svgNode is one element of the document tree, kept so that use elements
// can refer to elements defined later in the file.
type svgNode struct {
	name    string     // local name
	foreign bool       // the element belongs to another namespace (editor metadata)
	attrs   []xml.Attr // as written, namespaces resolved
	line    int        // 1-based line where the start tag begins
	kids    []*svgNode
}

// attr returns the value of the attribute name with no namespace.
func (n *svgNode) attr(name string) (string, bool) {
	for _, a := range n.attrs {
		if a.Name.Space == "" && a.Name.Local == name {
			return a.Value, true
		}
	}
	return "", false
}

// href returns the element's link target: SVG 2's href, else xlink:href
// (also when the xlink prefix was never declared).
func (n *svgNode) href() (string, bool) {
	if v, ok := n.attr("href"); ok {
		return v, true
	}
	for _, a := range n.attrs {
		if a.Name.Local == "href" && (a.Name.Space == xlinkNS || a.Name.Space == "xlink") {
			return a.Value, true
		}
	}
	return "", false
}

// entity returns "<path id="wall">" (the id shortened) for messages.
func (n *svgNode) entity() string {
	id, ok := n.attr("id")
	if !ok {
		return "<" + svgShort(n.name) + ">"
	}
	return fmt.Sprintf("<%s id=%q>", svgShort(n.name), svgShort(id))
}

// svgDocument is a parsed SVG file.
type svgDocument struct {
	root  *svgNode
	ids   map[string]*svgNode // the first element with each id
	nodes int                 // element count
	size  int64               // bytes read
	style bool                // the file has a <style> sheet, which is not applied
	dups  []string            // duplicate ids, for warnings
}

// svgCountingReader counts bytes and remembers a read error that is not EOF,
// so that I/O trouble is not reported as bad XML.
type svgCountingReader struct {
	r   io.Reader
	n   int64
	err error
}

func (c *svgCountingReader) Read(p []byte) (int, error) {
	n, err := c.r.Read(p)
	c.n += int64(n)
	if err != nil && err != io.EOF {
		c.err = err
	}
	return n, err
}

// svgReadDocument parses the XML of r into an element tree. Malformed XML,
// a root that is not svg, nesting deeper than maxDepth and an empty file
// are *InputError naming the line. Text content is not kept.
// Cost: O(input size) time and memory.
func svgReadDocument(r io.Reader, file string, maxDepth int) (*svgDocument, error) {
	cr := &svgCountingReader{r: r}
	dec := xml.NewDecoder(bufio.NewReaderSize(cr, 64<<10))
	dec.Strict = true
	// HTML entities such as &nbsp; appear in text written by hand; they are
	// harmless, so they are accepted rather than rejected as undefined.
	dec.Entity = maps.Clone(xml.HTMLEntity)
	dec.CharsetReader = svgCharsetReader
	doc := &svgDocument{ids: map[string]*svgNode{}}
	var stack []*svgNode
	fail := func(line int, entity, what, hint string) error {
		return &InputError{File: file, Line: line, Offset: -1, Entity: entity, What: what, Hint: hint}
	}
	for {
		line, _ := dec.InputPos()
		tok, err := dec.Token()
		if err != nil {
			doc.size = cr.n
			if cr.err != nil {
				return nil, fmt.Errorf("reading %s: %w", file, cr.err)
			}
			var se *xml.SyntaxError
			switch {
			case errors.Is(err, io.EOF) && doc.root == nil:
				return nil, fail(line, "", "empty document: no <svg> element found", "the file is empty or not SVG; export the drawing as SVG again")
			case errors.Is(err, io.EOF):
				return doc, nil
			case errors.As(err, &se):
				// encoding/xml quotes the offending text whole; a broken name can
				// be megabytes long, so the message is cut.
				return nil, fail(se.Line, "", "malformed XML: "+svgCut(se.Msg, 200), "the file is not well-formed XML; open it in an editor or browser to find the broken tag")
			}
			l, _ := dec.InputPos()
			return nil, fail(l, "", "unreadable XML: "+svgCut(err.Error(), 200), "save the file as UTF-8 SVG")
		}
		switch t := tok.(type) {
		case xml.StartElement:
			if doc.root != nil && len(stack) == 0 {
				return nil, fail(line, "<"+svgShort(t.Name.Local)+">", "a second top-level element after </svg>", "an SVG file has exactly one root <svg> element")
			}
			if len(stack) >= maxDepth {
				return nil, fail(line, "<"+svgShort(t.Name.Local)+">", fmt.Sprintf("elements nested deeper than %d levels", maxDepth),
					"flatten the groups in the drawing, or raise the nesting limit (ReadOptions.MaxDepth)")
			}
			n := &svgNode{name: t.Name.Local, foreign: t.Name.Space != "" && t.Name.Space != svgNS, line: line}
			n.attrs = append([]xml.Attr(nil), t.Attr...)
			doc.nodes++
			if doc.root == nil {
				if n.name != "svg" || n.foreign {
					return nil, fail(line, "<"+svgShort(t.Name.Local)+">", fmt.Sprintf("root element is <%s>, want <svg>", svgShort(t.Name.Local)), "the file is XML but not SVG")
				}
				doc.root = n
			} else {
				p := stack[len(stack)-1]
				p.kids = append(p.kids, n)
			}
			if id, ok := n.attr("id"); ok && !n.foreign {
				if _, dup := doc.ids[id]; dup {
					doc.dups = append(doc.dups, fmt.Sprintf("line %d: id %q is used again; use elements refer to the first", line, svgShort(id)))
				} else {
					doc.ids[id] = n
				}
			}
			if n.name == "style" && !n.foreign {
				doc.style = true
			}
			stack = append(stack, n)
		case xml.EndElement:
			stack = stack[:len(stack)-1] // strict mode guarantees matching tags
		case xml.Directive:
			svgDeclareEntities(dec.Entity, string(t))
		}
	}
}

// svgDeclareEntities adds the general entities of a DOCTYPE internal subset
// (<!ENTITY name "value">) to m, as editors use them for namespace URLs.
// Parameter entities, external entities and values longer than
// svgMaxEntityValue are ignored; a reference to them is then an undefined
// entity error.
func svgDeclareEntities(m map[string]string, dir string) {
	if !strings.HasPrefix(dir, "DOCTYPE") {
		return
	}
	rest := dir
	for count := 0; count < svgMaxEntities; count++ {
		i := strings.Index(rest, "<!ENTITY")
		if i < 0 {
			return
		}
		rest = rest[i+len("<!ENTITY"):]
		f := strings.TrimLeft(rest, " \t\r\n")
		j := strings.IndexAny(f, " \t\r\n")
		if j <= 0 || f[0] == '%' {
			continue
		}
		name := f[:j]
		v := strings.TrimLeft(f[j:], " \t\r\n")
		if v == "" || v[0] != '"' && v[0] != '\'' {
			continue
		}
		k := strings.IndexByte(v[1:], v[0])
		if k < 0 || k > svgMaxEntityValue {
			continue
		}
		if _, ok := m[name]; !ok {
			m[name] = v[1 : 1+k]
		}
	}
}

// svgCharsetReader decodes the single-byte encodings older exporters
// declare: ISO-8859-1 and US-ASCII map each byte to the code point of the
// same value. windows-1252 differs only in 0x80-0x9F, which appear in text
// (skipped) rather than in geometry, so it is read the same way.
func svgCharsetReader(charset string, r io.Reader) (io.Reader, error) {
	switch strings.ToLower(charset) {
	case "iso-8859-1", "iso8859-1", "latin1", "latin-1", "us-ascii", "ascii", "windows-1252", "cp1252":
		return &svgLatin1Reader{r: bufio.NewReader(r)}, nil
	}
	return nil, fmt.Errorf("encoding %q is not supported (UTF-8, ISO-8859-1 and US-ASCII are)", svgShort(charset))
}

// svgLatin1Reader turns ISO-8859-1 bytes into UTF-8.
type svgLatin1Reader struct {
	r       *bufio.Reader
	pending []byte
}

func (l *svgLatin1Reader) Read(p []byte) (int, error) {
	n := 0
	for n < len(p) {
		if len(l.pending) > 0 {
			c := copy(p[n:], l.pending)
			l.pending = l.pending[c:]
			n += c
			continue
		}
		b, err := l.r.ReadByte()
		if err != nil {
			if n > 0 {
				return n, nil
			}
			return 0, err
		}
		if b < 0x80 {
			p[n] = b
			n++
			continue
		}
		l.pending = append(l.pending[:0], 0xC0|b>>6, 0x80|b&0x3F)
	}
	return n, nil
}

// svgCut shortens a message to at most n bytes of valid UTF-8.
func svgCut(s string, n int) string {
	if len(s) <= n {
		return s
	}
	return strings.ToValidUTF8(s[:n], "") + "..."
}
