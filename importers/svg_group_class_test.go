package importers

import (
	"fmt"
	"testing"
)

// TestReadSVGGroupClassNamesChildren: an unnamed element takes its surface
// from the nearest enclosing group's id, and now also from its class when
// the group has no id (the README's "id or class"; editors and scripts
// often mark layers with a class). Before, the rect inside <g class="grp">
// was named "svg", the file-wide fallback.
func TestReadSVGGroupClassNamesChildren(t *testing.T) {
	for _, tc := range []struct {
		name, body string
		want       []string
	}{
		{"group class", `<g class="grp"><rect width="1" height="1"/></g>`, []string{"grp"}},
		{"first of several classes", `<g class="tubes hot"><rect width="1" height="1"/></g>`, []string{"tubes"}},
		{"group id wins over its class", `<g id="lining" class="grp"><rect width="1" height="1"/></g>`, []string{"lining"}},
		{"own class wins", `<g class="grp"><rect class="lip" width="1" height="1"/></g>`, []string{"lip"}},
		{"nested unnamed group inherits", `<g class="grp"><g><rect width="1" height="1"/></g></g>`, []string{"grp"}},
		{"blank class is no name", `<g class="  "><rect width="1" height="1"/></g>`, []string{"svg"}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			d := svgRead(t, svgMM(tc.body), ReadOptions{})
			var got []string
			for _, p := range d.Polylines {
				got = append(got, p.Surface)
			}
			if fmt.Sprint(got) != fmt.Sprint(tc.want) {
				t.Errorf("ReadSVG(%s) surfaces = %v, want %v", tc.body, got, tc.want)
			}
		})
	}
}
