package main

import (
	"strings"
	"testing"
)

// TestHelpShowsNoSentinelDefaults: a flag whose "not given" value is a
// sentinel (NaN, -1) states its real default in its usage text; the help
// must not also print the sentinel. Before, `chimask radiation --help` read
// "(default: the scene's, else 300) (default NaN)".
func TestHelpShowsNoSentinelDefaults(t *testing.T) {
	for _, tc := range []struct{ cmd, flag, want string }{
		{"radiation", "--ambient", "else 300)"},
		{"radiation", "--seed", "else 1)"},
		{"radiation", "--rays", "else 200000)"},
	} {
		t.Run(tc.cmd+" "+tc.flag, func(t *testing.T) {
			code, out, _ := runCLI(t, tc.cmd, "--help")
			var line string
			for _, l := range strings.Split(out, "\n") {
				if strings.Contains(l, tc.flag+" ") {
					line = l
				}
			}
			if code != 0 || !strings.HasSuffix(strings.TrimSpace(line), tc.want) || strings.Contains(line, "NaN") {
				t.Errorf("chimask %s --help: exit %d, %s line %q; want it to end in %q with no NaN", tc.cmd, code, tc.flag, line, tc.want)
			}
		})
	}
}
