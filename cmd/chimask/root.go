package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"os/signal"
	"syscall"

	"github.com/spf13/cobra"

	"chimask/importers"
	"chimask/masks"
)

// version is the tool version recorded in every manifest.
const version = "0.1.0"

// Exit codes: a contract for scripts.
const (
	exitOK        = 0 // success
	exitCheckFail = 1 // a check failed (or an internal error)
	exitBadInput  = 2 // bad input or usage
)

// streams are the command's standard streams, so commands are testable
// without a subprocess.
type streams struct {
	in       io.Reader
	out, err io.Writer
}

// usageError is a mistake on the command line: exit code 2.
type usageError struct{ msg, hint string }

func (e *usageError) Error() string { return e.msg }

// checkFailedError says a check ran and failed: exit code 1, after the
// command has written its report.
type checkFailedError struct{ msg string }

func (e *checkFailedError) Error() string { return e.msg }

// run executes chimask with args and returns the exit code.
func run(args []string, stdin io.Reader, stdout, stderr io.Writer) int {
	s := &streams{in: stdin, out: stdout, err: stderr}
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	defer stop()
	root := newRootCmd(s)
	root.SetArgs(args)
	err := root.ExecuteContext(ctx)
	if err == nil {
		return exitOK
	}
	return reportError(s, err)
}

// reportError prints "chimask: <error>" and a hint line, and picks the exit code.
func reportError(s *streams, err error) int {
	fmt.Fprintf(s.err, "chimask: %v\n", err)
	var ie *importers.InputError
	var re *masks.ReadError
	var ue *usageError
	var cf *checkFailedError
	switch {
	case errors.As(err, &ie):
		if ie.Hint != "" {
			fmt.Fprintf(s.err, "hint: %s\n", ie.Hint)
		}
		return exitBadInput
	case errors.As(err, &re):
		if re.Hint != "" {
			fmt.Fprintf(s.err, "hint: %s\n", re.Hint)
		}
		return exitBadInput
	case errors.As(err, &ue):
		if ue.hint != "" {
			fmt.Fprintf(s.err, "hint: %s\n", ue.hint)
		}
		return exitBadInput
	case errors.As(err, &cf):
		return exitCheckFail
	case errors.Is(err, context.Canceled):
		fmt.Fprintln(s.err, "hint: the run was interrupted; outputs already in place were left untouched")
		return exitCheckFail
	}
	return exitCheckFail
}

func newRootCmd(s *streams) *cobra.Command {
	root := &cobra.Command{
		Use:   "chimask",
		Short: "Turn CAD drawings into solid-fraction masks for immersed-boundary solvers, and prove them",
		Long: `chimask reads 2D outlines (DXF, SVG) and 3D meshes (STL), voxelizes them onto a
Cartesian grid with a signed-distance engine, and writes the fields a
volume-penalization or immersed-boundary solver needs: solid fraction, indicator,
signed distance, interface normals, interface density, region label and the
surface tags (surface id, emissivity, wall temperature, material).

Outputs: VTK XML ImageData (mask.vti), one NumPy array per field (<field>.npy)
and manifest.json describing the grid, the fields and the surfaces.

Exit codes: 0 success, 1 a check failed, 2 bad input or usage.

The masks and checks support, and do not replace, engineering judgement; for
high-temperature equipment defer to local codes and licensed practice.`,
		Example: `  chimask demo --out demo-mask
  chimask inspect receiver.dxf
  chimask build receiver.toml
  chimask build receiver.dxf --units mm --cell 0.5mm --out receiver-mask`,
		SilenceUsage:  true,
		SilenceErrors: true,
	}
	root.SetOut(s.out)
	root.SetErr(s.err)
	root.SetIn(s.in)
	root.SetFlagErrorFunc(func(c *cobra.Command, err error) error {
		return &usageError{msg: err.Error(), hint: fmt.Sprintf("see `%s --help`", c.CommandPath())}
	})
	root.AddCommand(newVersionCmd(s), newInspectCmd(s), newBuildCmd(s), newRadiationCmd(s), newCheckCmd(s), newDemoCmd(s), newReportCmd(s), newMergeCmd(s))
	for _, c := range root.Commands() {
		wrapArgs(c)
	}
	return root
}

// wrapArgs turns cobra's argument-count errors into usage errors (exit 2).
func wrapArgs(c *cobra.Command) {
	if c.Args == nil {
		return
	}
	inner := c.Args
	c.Args = func(cmd *cobra.Command, args []string) error {
		if err := inner(cmd, args); err != nil {
			return &usageError{msg: err.Error(), hint: fmt.Sprintf("see `%s --help`", cmd.CommandPath())}
		}
		return nil
	}
}
