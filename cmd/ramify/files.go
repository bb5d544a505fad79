package main

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
)

// Output files are checked before any computation (so that a mistyped
// directory is reported at once, not after minutes of walking), are never
// one of the command's input files (compared by identity, so a symlink or a
// hard link to the input is caught too), and are written to a temporary file
// in the same directory that is renamed over the target only when complete:
// an interrupted or failed write leaves the old file, and a symlink at the
// target is replaced, not followed.

// outTarget is a file or directory flag and its value, as the user typed it.
type outTarget struct {
	flag string // "--field", "--samples", "--plot"
	path string
	dir  bool // a directory that receives several files
}

// checkOutputs reports the first output that cannot be written, before the
// computation. inputs are the files the command reads.
func checkOutputs(inputs []string, outs ...outTarget) error {
	for _, o := range outs {
		if o.path == "" {
			continue
		}
		var err error
		if o.dir {
			err = checkOutDir(o.path, inputs)
		} else {
			err = checkOutFile(o.path, inputs)
		}
		if err != nil {
			return fmt.Errorf("%s %s: %w", o.flag, o.path, err)
		}
	}
	return nil
}

// errIsInput is returned for an output path that names an input file.
var errIsInput = errors.New("names an input file of this command, and ramify never overwrites its input (choose another name)")

// sameAsInput reports whether path is (after symlinks) one of inputs.
func sameAsInput(path string, inputs []string) bool {
	st, err := os.Stat(path)
	if err != nil {
		return false
	}
	for _, in := range inputs {
		if ist, err := os.Stat(in); err == nil && os.SameFile(st, ist) {
			return true
		}
	}
	return false
}

// checkOutFile checks that path can be created or replaced: its directory
// exists and takes new files, it is not a directory and not an input.
func checkOutFile(path string, inputs []string) error {
	if sameAsInput(path, inputs) {
		return errIsInput
	}
	if st, err := os.Stat(path); err == nil && st.IsDir() {
		return errors.New("is a directory (a file name is needed)")
	}
	return checkDirWritable(filepath.Dir(path))
}

// checkOutDir checks that dir exists as a writable directory, or can be
// created (its nearest existing ancestor is a writable directory).
func checkOutDir(dir string, inputs []string) error {
	if sameAsInput(dir, inputs) {
		return errIsInput
	}
	st, err := os.Stat(dir)
	switch {
	case err == nil && !st.IsDir():
		return errors.New("exists and is not a directory")
	case err == nil:
		return checkDirWritable(dir)
	case !errors.Is(err, fs.ErrNotExist):
		return err
	}
	// Find the nearest existing ancestor.
	parent := filepath.Dir(filepath.Clean(dir))
	for {
		st, err := os.Stat(parent)
		if err == nil {
			if !st.IsDir() {
				return fmt.Errorf("cannot be created: %s is not a directory", parent)
			}
			return checkDirWritable(parent)
		}
		if !errors.Is(err, fs.ErrNotExist) {
			return err
		}
		up := filepath.Dir(parent)
		if up == parent {
			return fmt.Errorf("cannot be created: %w", err)
		}
		parent = up
	}
}

// checkDirWritable checks that dir exists and that a file can be created in
// it (by creating and removing an empty temporary file).
func checkDirWritable(dir string) error {
	st, err := os.Stat(dir)
	if err != nil {
		if errors.Is(err, fs.ErrNotExist) {
			return fmt.Errorf("no such directory %s", dir)
		}
		return err
	}
	if !st.IsDir() {
		return fmt.Errorf("%s is not a directory", dir)
	}
	f, err := os.CreateTemp(dir, ".ramify-check-*")
	if err != nil {
		return fmt.Errorf("cannot write in %s: %w", dir, unwrapPath(err))
	}
	name := f.Name()
	f.Close()
	os.Remove(name)
	return nil
}

// unwrapPath drops the operation and path of a *fs.PathError, which the
// caller names itself.
func unwrapPath(err error) error {
	var pe *fs.PathError
	if errors.As(err, &pe) {
		return pe.Err
	}
	return err
}

// saveFile writes path through write: into a temporary file in the same
// directory, renamed over path when write and the close succeed. It refuses
// an input file. It returns whether an existing file was replaced. A file it
// creates gets mode 0644; a file
// it replaces keeps its mode.
func saveFile(path string, inputs []string, write func(w io.Writer) error) (replaced bool, err error) {
	if sameAsInput(path, inputs) {
		return false, fmt.Errorf("%s %w", path, errIsInput)
	}
	mode := os.FileMode(0o644)
	if st, err := os.Lstat(path); err == nil {
		replaced = true
		if st.Mode().IsRegular() {
			mode = st.Mode().Perm()
		}
	}
	tmp, err := tempBeside(path)
	if err != nil {
		return false, err
	}
	name := tmp.Name()
	defer func() {
		if err != nil {
			os.Remove(name)
		}
	}()
	bw := bufio.NewWriterSize(tmp, 1<<16)
	if err := write(bw); err != nil {
		tmp.Close()
		return false, err
	}
	if err := bw.Flush(); err != nil {
		tmp.Close()
		return false, err
	}
	if err := tmp.Chmod(mode); err != nil {
		tmp.Close()
		return false, err
	}
	if err := tmp.Close(); err != nil {
		return false, err
	}
	if err := os.Rename(name, path); err != nil {
		return false, err
	}
	return replaced, nil
}

// saveByName is saveFile for writers that want a path (plots): write is
// given the temporary file's name, which has the same extension as path.
func saveByName(path string, inputs []string, write func(tmp string) error) (replaced bool, err error) {
	if sameAsInput(path, inputs) {
		return false, fmt.Errorf("%s %w", path, errIsInput)
	}
	if _, err := os.Lstat(path); err == nil {
		replaced = true
	}
	tmp, err := tempBeside(path)
	if err != nil {
		return false, err
	}
	name := tmp.Name()
	tmp.Close()
	if err := write(name); err != nil {
		os.Remove(name)
		return false, err
	}
	if err := os.Chmod(name, 0o644); err != nil {
		os.Remove(name)
		return false, err
	}
	if err := os.Rename(name, path); err != nil {
		os.Remove(name)
		return false, err
	}
	return replaced, nil
}

// tempBeside creates a hidden temporary file next to path with path's
// extension.
func tempBeside(path string) (*os.File, error) {
	dir, base := filepath.Split(path)
	if dir == "" {
		dir = "."
	}
	ext := filepath.Ext(base)
	return os.CreateTemp(dir, "."+base[:len(base)-len(ext)]+".*.tmp"+ext)
}

// wrote tells the user on stderr what was written.
func wrote(stderr io.Writer, cmd, path string, replaced bool, what string) {
	how := "wrote"
	if replaced {
		how = "replaced"
	}
	fmt.Fprintf(stderr, "ramify %s: %s %s (%s)\n", cmd, how, path, what)
}
