package main

import (
	"bytes"
	"context"
	"fmt"
	"io"
	"os"
	"path/filepath"

	"github.com/spf13/cobra"

	"chimask/masks"
	"chimask/samples"
)

// demoOptions are the arguments of `chimask demo`.
type demoOptions struct {
	Out     string
	Workers int
}

func newDemoCmd(s *streams) *cobra.Command {
	var o demoOptions
	c := &cobra.Command{
		Use:   "demo",
		Short: "Run the whole job on the embedded sample receiver",
		Long: `Demo writes the embedded sample (a cross-section of a cavity receiver with a
slot aperture and a row of thin-walled absorber tubes, drawn as DXF and as SVG,
with the scene files that describe its surfaces and materials) into the output
folder, builds the mask from the DXF scene, builds it again from the SVG scene,
and prints the grid, the cells per surface and the solid area against the
exact one. The scene files in the folder are a starting point for your own.`,
		Example: `  chimask demo
  chimask demo --out /tmp/receiver-demo`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			return runDemo(cmd.Context(), s, o)
		},
	}
	c.Flags().StringVar(&o.Out, "out", "chimask-demo", "folder for the sample files and the masks")
	c.Flags().IntVar(&o.Workers, "workers", 0, "worker goroutines (0 = all cores)")
	return c
}

// runDemo writes the samples and builds them.
func runDemo(ctx context.Context, s *streams, o demoOptions) error {
	if err := os.MkdirAll(o.Out, 0o755); err != nil {
		return &usageError{msg: fmt.Sprintf("cannot create %s: %v", o.Out, unwrapPath(err)), hint: "choose another --out folder"}
	}
	files := []struct {
		name string
		data []byte
	}{
		{"receiver.dxf", samples.ReceiverDXF}, {"receiver.svg", samples.ReceiverSVG},
		{"receiver.toml", samples.ReceiverScene}, {"receiver-svg.toml", samples.ReceiverSVGScene},
	}
	// The scenes are meant to be edited in place; a second demo run must
	// not silently put the samples back over someone's edits.
	for _, f := range files {
		path := filepath.Join(o.Out, f.name)
		if old, err := os.ReadFile(path); err == nil && !bytes.Equal(old, f.data) {
			return &usageError{msg: fmt.Sprintf("%s exists and differs from the sample; demo would overwrite it", path),
				hint: "run the demo into another --out folder, or build your edited scene with chimask build"}
		}
	}
	for _, f := range files {
		path := filepath.Join(o.Out, f.name)
		err := masks.WriteFileAtomic(path, func(w io.Writer) error { _, err := w.Write(f.data); return err })
		if err != nil {
			return fmt.Errorf("writing %s: %w", path, err)
		}
	}
	fmt.Fprintf(s.out, "chimask demo: cavity receiver cross-section, samples in %s\n\n", o.Out)
	var areas []float64
	var reports []string
	for _, scene := range []string{"receiver.toml", "receiver-svg.toml"} {
		path := filepath.Join(o.Out, scene)
		sc, err := sceneFor(path, gridFlags{Workers: o.Workers})
		if err != nil {
			return err
		}
		b, err := buildScene(ctx, s, sc, gridFlags{Workers: o.Workers})
		if err != nil {
			return err
		}
		if err := writeBuilt(b); err != nil {
			return err
		}
		fmt.Fprintf(s.out, "== %s (%s)\n", scene, sc.Title)
		printSummary(s.out, b)
		if err := writeBuiltReport(s, b, gridFlags{Workers: o.Workers}, nil, nil); err != nil {
			return err
		}
		reports = append(reports, filepath.Join(b.OutDir, reportHTML))
		fmt.Fprintln(s.out)
		areas = append(areas, solidMeasure(b))
	}
	exact := samples.Demo.SolidArea() * 1e-6
	// Against the design's true arcs, not the flattened outline the masks
	// match to round-off: the difference is the chord flattening (cell/1000).
	fmt.Fprintf(s.out, "solid area of the design with true arcs: %.6g m^2; DXF mask %+.2e, SVG mask %+.2e relative (arcs flattened to cell/1000)\n",
		exact, areas[0]/exact-1, areas[1]/exact-1)
	fmt.Fprintln(s.out, "\nThe masks and checks support, and do not replace, engineering judgement;")
	fmt.Fprintln(s.out, "for high-temperature equipment defer to local codes and licensed practice.")
	fmt.Fprintf(s.out, "\nreport (open it in a browser): %s\n", reports[0])
	return nil
}
