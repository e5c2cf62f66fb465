package masks

import (
	"bufio"
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"syscall"
)

// File names inside an output folder.
const (
	ManifestFile = "manifest.json"
	VTIFile      = "mask.vti"
	ZarrDir      = "mask.zarr"
)

// WriteFileAtomic creates or replaces the file at path with what write
// produces. write gets a buffered writer on a temporary file in the same
// directory; only when write returns nil and the data are flushed, synced and
// closed is the temporary file renamed over path. On any error the
// temporary file is removed and a previous file at path is left untouched,
// so an interrupted or failed run never leaves a half-written file. The
// file gets mode 0644 (before umask).
func WriteFileAtomic(path string, write func(io.Writer) error) error {
	return outWriteAtomic(path, true, 1<<20, write)
}

// outWriteAtomic is WriteFileAtomic with the fsync before the rename made
// optional: the rename alone already protects against an interrupted
// process; the fsync also protects against a power cut, at about a
// millisecond per file, which matters for the thousands of Zarr chunks.
// bufSize 0 hands write the file itself, for callers that write one slice.
func outWriteAtomic(path string, sync bool, bufSize int, write func(io.Writer) error) error {
	tmp, err := outWriteTemp(path, sync, bufSize, write)
	if err != nil {
		return err
	}
	if err := os.Rename(tmp, path); err != nil {
		os.Remove(tmp)
		return err
	}
	return nil
}

// outWriteTemp writes what write produces to a new temporary file beside
// path and returns its name, complete and closed (and synced when sync is
// set), ready to be renamed over path. On error nothing is left behind.
func outWriteTemp(path string, sync bool, bufSize int, write func(io.Writer) error) (name string, err error) {
	dir, base := filepath.Split(path)
	if dir == "" {
		dir = "."
	}
	tmp, err := os.CreateTemp(dir, "."+base+".tmp-*")
	if err != nil {
		return "", err
	}
	defer func() {
		if err != nil {
			tmp.Close()
			os.Remove(tmp.Name())
		}
	}()
	if bufSize > 0 {
		bw := bufio.NewWriterSize(tmp, bufSize)
		if err = write(bw); err != nil {
			return "", err
		}
		err = bw.Flush()
	} else {
		err = write(tmp)
	}
	if err != nil {
		return "", err
	}
	if err = tmp.Chmod(0o644); err != nil {
		return "", err
	}
	if sync {
		if err = tmp.Sync(); err != nil {
			return "", err
		}
	}
	if err = tmp.Close(); err != nil {
		return "", err
	}
	return tmp.Name(), nil
}

// outCtxWriter passes writes on in pieces of at most outCtxPiece bytes and
// stops with ctx.Err() once ctx is cancelled, so that a cancelled run does
// not finish writing a file of hundreds of megabytes first.
type outCtxWriter struct {
	ctx context.Context
	w   io.Writer
}

// outCtxPiece is the most written between two looks at the context: 4 MiB,
// some milliseconds of disk time.
const outCtxPiece = 4 << 20

func (c outCtxWriter) Write(p []byte) (int, error) {
	n := 0
	for len(p) > 0 {
		if err := c.ctx.Err(); err != nil {
			return n, err
		}
		k := min(len(p), outCtxPiece)
		m, err := c.w.Write(p[:k])
		n += m
		if err != nil {
			return n, err
		}
		p = p[k:]
	}
	return n, nil
}

// outFormats checks formats and returns the set, defaulting to vti and npy.
func outFormats(formats []string) (map[string]bool, error) {
	if len(formats) == 0 {
		formats = []string{"vti", "npy"}
	}
	set := map[string]bool{}
	for _, f := range formats {
		switch f {
		case "vti", "npy", "zarr":
			set[f] = true
		default:
			return nil, fmt.Errorf("output format %q, want vti, npy or zarr", f)
		}
	}
	return set, nil
}

// outCheckName refuses a field name that cannot be a file stem on every
// common file system, or that could escape the output folder.
func outCheckName(name string) error {
	if name == "" || name[0] == '.' || len(name) > 200 {
		return fmt.Errorf("field name %q: want 1 to 200 characters, not starting with '.'", name)
	}
	for _, c := range name {
		if !(c == '_' || c == '-' || c == '.' || ('0' <= c && c <= '9') || ('a' <= c && c <= 'z') || ('A' <= c && c <= 'Z')) {
			return fmt.Errorf("field name %q: only letters, digits, '_', '-' and '.' are allowed", name)
		}
	}
	return nil
}

// WriteDir writes a mask into dir (created if missing): one <field>.npy per
// field (format "npy"), mask.vti ("vti"), mask.zarr ("zarr", with default
// ZarrOptions) and manifest.json. It is WriteDirContext with a context that
// is never cancelled; see there for the rules.
func WriteDir(dir string, m *Mask, man *Manifest, formats []string) error {
	return WriteDirContext(context.Background(), dir, m, man, formats)
}

// WriteDirContext writes a mask into dir (created if missing): one
// <field>.npy per field (format "npy"), mask.vti ("vti"), mask.zarr
// ("zarr", with default ZarrOptions) and manifest.json. Every file (and the
// Zarr store, as a folder) is first written completely under a temporary
// name in dir; only when all are complete are they renamed into place, the
// previous manifest removed first and the new one renamed last. A run that
// fails or is cancelled before that point (a full disk, ctx cancelled by an
// interrupt, checked between files and every 4 MiB written) removes its
// temporary files and leaves a previous output in dir exactly as it was;
// the renames that follow take milliseconds and are not interrupted. While
// writing, dir holds both outputs, so it needs room for both. A present
// manifest therefore means every file it names is complete and from the
// same run; ReadDir refuses a folder without one. formats is a subset of
// "vti", "npy", "zarr"; nil or empty means vti and npy. A cancelled ctx
// gives an error wrapping ctx.Err().
//
// The manifest written is a copy of man (NewManifest(m, Provenance{}) when
// man is nil) whose grid, fields and files entries are regenerated from m and
// formats, so it always describes exactly what was written; its other
// entries are kept. A mask.zarr store of an earlier run is replaced as a
// whole (a mask.zarr folder that is not a store is an error); the .npy files
// and mask.vti the previous manifest named and this run does not rewrite
// (a format or field since dropped) are removed after the commit, so the
// standard names never hold an older mask; other files (a mask.zarr the new
// formats leave out, anything the old manifest did not name) are left in
// place. Field names must be usable as file names
// (letters, digits, '_', '-', '.') and unique. WriteDirContext uses default
// VTIOptions and ZarrOptions; a caller who needs others writes those files
// with WriteVTI or WriteZarr itself.
func WriteDirContext(ctx context.Context, dir string, m *Mask, man *Manifest, formats []string) (err error) {
	set, err := outFormats(formats)
	if err != nil {
		return err
	}
	if err := m.Grid.Validate(); err != nil {
		return err
	}
	seen := map[string]bool{}
	for _, f := range m.Fields {
		if err := npyCheckField(m.Grid, f); err != nil {
			return err
		}
		if err := outCheckName(f.Name); err != nil {
			return err
		}
		if seen[f.Name] {
			return fmt.Errorf("two fields are called %q", f.Name)
		}
		seen[f.Name] = true
	}
	if man == nil {
		man = NewManifest(m, Provenance{})
	}
	fresh := NewManifest(m, man.Provenance)
	c := *man
	c.Format, c.FormatVersion = ManifestFormat, ManifestVersion
	c.Grid, c.Fields, c.Files = fresh.Grid, fresh.Fields, ManifestFiles{}
	if c.Surfaces == nil {
		c.Surfaces = fresh.Surfaces
	}
	if c.Materials == nil {
		c.Materials = fresh.Materials
	}
	if !set["npy"] {
		for i := range c.Fields {
			c.Fields[i].File = ""
		}
	}
	if set["vti"] {
		c.Files.VTI = VTIFile
	}
	if set["zarr"] {
		c.Files.Zarr = ZarrDir
	}

	if err := os.MkdirAll(dir, 0o755); err != nil {
		return err
	}
	// Stage every output under a temporary name; nothing in dir changes
	// until all of them are complete.
	type outStaged struct{ tmp, final string }
	var staged []outStaged
	defer func() {
		if err != nil {
			for _, st := range staged {
				os.RemoveAll(st.tmp)
			}
		}
	}()
	stage := func(name string, write func(io.Writer) error) error {
		if err := ctx.Err(); err != nil {
			return err
		}
		final := filepath.Join(dir, name)
		tmp, err := outWriteTemp(final, true, 1<<20, func(w io.Writer) error { return write(outCtxWriter{ctx, w}) })
		if err != nil {
			return fmt.Errorf("writing %s: %w", name, err)
		}
		staged = append(staged, outStaged{tmp, final})
		return nil
	}
	if set["npy"] {
		for _, f := range m.Fields {
			if err := stage(f.Name+".npy", func(w io.Writer) error { return WriteNPY(w, m.Grid, f) }); err != nil {
				return err
			}
		}
	}
	if set["vti"] {
		if err := stage(VTIFile, func(w io.Writer) error { return WriteVTI(w, m, VTIOptions{}) }); err != nil {
			return err
		}
	}
	zdir := filepath.Join(dir, ZarrDir)
	if set["zarr"] {
		if fi, err := os.Stat(zdir); err == nil && fi.IsDir() {
			if _, err := os.Stat(filepath.Join(zdir, ".zgroup")); err != nil {
				return fmt.Errorf("writing %s: %s exists and is not a Zarr store; move it away", ZarrDir, zdir)
			}
		}
		if err := ctx.Err(); err != nil {
			return err
		}
		tmp, err := os.MkdirTemp(dir, "."+ZarrDir+".tmp-*")
		if err != nil {
			return err
		}
		staged = append(staged, outStaged{tmp, zdir})
		if err := WriteZarr(tmp, m, &c, ZarrOptions{}); err != nil {
			return fmt.Errorf("writing %s: %w", ZarrDir, err)
		}
	}
	if err := stage(ManifestFile, func(w io.Writer) error { return WriteManifest(w, &c) }); err != nil {
		return err
	}
	if err := ctx.Err(); err != nil {
		return err
	}
	var finals []string
	for _, st := range staged {
		finals = append(finals, st.final)
	}
	stale := outStale(dir, finals)
	// Commit. A manifest from an earlier run goes first: should a rename
	// fail, the folder then has no manifest rather than one that vouches
	// for a mix of old and new files. The new manifest is staged last and
	// renamed last.
	if err := os.Remove(filepath.Join(dir, ManifestFile)); err != nil && !errors.Is(err, os.ErrNotExist) {
		return err
	}
	for i, st := range staged {
		if st.final == zdir {
			if err := os.RemoveAll(zdir); err != nil {
				return err
			}
		}
		if err := os.Rename(st.tmp, st.final); err != nil {
			return err
		}
		staged[i].tmp = "" // renamed: nothing to clean up
	}
	for _, p := range stale {
		if err := os.Remove(p); err != nil && !errors.Is(err, os.ErrNotExist) {
			return err
		}
	}
	return nil
}

// outStale lists the .npy files and mask.vti that the manifest already in
// dir names and this run does not rewrite (finals): left in place they
// would be the previous mask under the standard names, and np.load of one
// would silently read the old geometry. A mask.zarr store is not listed (it
// can hold hours of a parted build; the new manifest simply does not name
// it), nor is any file the old manifest does not name. An unreadable old
// manifest lists nothing.
func outStale(dir string, finals []string) []string {
	f, err := os.Open(filepath.Join(dir, ManifestFile))
	if err != nil {
		return nil
	}
	old, err := manRead(f, filepath.Join(dir, ManifestFile))
	f.Close()
	if err != nil {
		return nil
	}
	var names []string
	for _, fl := range old.Fields {
		if strings.HasSuffix(fl.File, ".npy") && outCheckName(fl.File) == nil {
			names = append(names, fl.File)
		}
	}
	if old.Files.VTI == VTIFile {
		names = append(names, VTIFile)
	}
	var out []string
	for _, n := range names {
		if p := filepath.Join(dir, n); !slices.Contains(finals, p) && !slices.Contains(out, p) {
			out = append(out, p)
		}
	}
	return out
}

// ReadDir reads a folder written by WriteDir: the manifest and every field's
// .npy file, each checked against the manifest's dtype and shape. It returns
// the mask (fields in manifest order with their units and meanings, the
// surfaces and materials tables) and the manifest. A missing or broken file,
// a field written without .npy, or a file name that would leave the folder
// gives a *ReadError naming the file.
func ReadDir(dir string) (*Mask, *Manifest, error) {
	mpath := filepath.Join(dir, ManifestFile)
	mf, err := os.Open(mpath)
	if err != nil {
		if errors.Is(err, os.ErrNotExist) {
			return nil, nil, &ReadError{File: mpath, Offset: -1, What: "no manifest.json in the folder", Hint: "give the folder a chimask build wrote"}
		}
		if errors.Is(err, syscall.ENOTDIR) { // a drawing or a file given where a folder belongs
			return nil, nil, &ReadError{File: dir, Offset: -1, What: "not a folder", Hint: "give the output folder a chimask build wrote, not a file in it"}
		}
		return nil, nil, err
	}
	man, err := manRead(mf, mpath)
	mf.Close()
	if err != nil {
		return nil, nil, err
	}
	g, _ := man.GridOf() // manRead validated it
	m := &Mask{Grid: g, Surfaces: man.Surfaces, Materials: man.Materials}
	for _, mfld := range man.Fields {
		f, err := outReadField(dir, mpath, g, mfld)
		if err != nil {
			return nil, nil, err
		}
		m.Fields = append(m.Fields, f)
	}
	return m, man, nil
}

// outReadField reads one field's .npy file and checks it against its
// manifest entry.
func outReadField(dir, mpath string, g Grid, mfld ManifestField) (*Field, error) {
	if mfld.File == "" {
		return nil, &ReadError{File: mpath, Offset: -1, What: fmt.Sprintf("field %q was written without a .npy file", mfld.Name),
			Hint: "rebuild the mask with the npy output format"}
	}
	if filepath.Base(mfld.File) != mfld.File || strings.HasPrefix(mfld.File, ".") || strings.ContainsAny(mfld.File, `/\`) {
		return nil, &ReadError{File: mpath, Offset: -1, What: fmt.Sprintf("field %q names the file %q, want a plain file name inside the folder", mfld.Name, mfld.File),
			Hint: "the manifest was edited or is corrupt; rebuild the mask"}
	}
	path := filepath.Join(dir, mfld.File)
	fh, err := os.Open(path)
	if err != nil {
		if errors.Is(err, os.ErrNotExist) {
			return nil, &ReadError{File: path, Offset: -1, What: fmt.Sprintf("the manifest lists %s but the file is missing", mfld.File), Hint: "rebuild the mask"}
		}
		return nil, err
	}
	defer fh.Close()
	avail := npyAvailable(fh)
	shape, f, err := npyRead(bufio.NewReaderSize(fh, 1<<16), path, avail)
	if err != nil {
		return nil, err
	}
	dt, _ := npyDTypeOf(mfld.DType)
	if f.DType != dt || !slices.Equal(shape, mfld.Shape) {
		return nil, &ReadError{File: path, Offset: -1,
			What: fmt.Sprintf("array is %s with shape %v, the manifest says %s with shape %v", npyDescr(f.DType), shape, mfld.DType, mfld.Shape),
			Hint: "the file was replaced after the build; rebuild the mask"}
	}
	f.Name, f.Unit, f.Meaning, f.Components = mfld.Name, mfld.Unit, mfld.Meaning, mfld.Components
	return f, nil
}
