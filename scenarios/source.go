package scenarios

import (
	"errors"
	"fmt"
	"io"
	"io/fs"
	"path"
	"path/filepath"

	"spinpop/internal/regular"
)

// maxFileBytes bounds what the loader reads. Scenario files are a few
// kilobytes; a bigger file is almost surely a catalog passed by mistake,
// and refusing it early beats a confusing TOML error at line 1.
const maxFileBytes = 1 << 20

// source reads scenario files and resolves an extends path relative to
// the file that names it. locateData resolves data.file, set in file
// from, to a path and the file system it lies in (nil: the operating
// system's).
type source interface {
	read(name string) ([]byte, error)
	join(from, extends string) (string, error)
	locateData(from, file string) (string, fs.FS, error)
}

// osSource reads from the operating system's file system.
type osSource struct{}

func (osSource) read(name string) ([]byte, error) {
	// Only regular files: a FIFO would block the open for ever.
	f, err := regular.Open(name)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	return readLimited(f)
}

func (osSource) join(from, extends string) (string, error) {
	if extends == "" {
		return "", errors.New("the path is empty")
	}
	if filepath.IsAbs(extends) {
		return filepath.Clean(extends), nil
	}
	return filepath.Join(filepath.Dir(from), extends), nil
}

func (s osSource) locateData(from, file string) (string, fs.FS, error) {
	p, err := s.join(from, file)
	return p, nil, err
}

// fsSource reads from an fs.FS, such as the embedded examples. Paths are
// slash-separated and may not leave the file system's root.
type fsSource struct{ fsys fs.FS }

func (s fsSource) read(name string) ([]byte, error) {
	f, err := s.fsys.Open(name)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	return readLimited(f)
}

func (fsSource) join(from, extends string) (string, error) {
	if extends == "" {
		return "", errors.New("the path is empty")
	}
	if path.IsAbs(extends) {
		return "", errors.New("an absolute path cannot be used here; give a path relative to this file")
	}
	p := path.Join(path.Dir(from), extends)
	if !fs.ValidPath(p) {
		return "", fmt.Errorf("%s leaves the directory tree the scenario was loaded from", p)
	}
	return p, nil
}

func (s fsSource) locateData(from, file string) (string, fs.FS, error) {
	p, err := s.join(from, file)
	return p, s.fsys, err
}

// noSource is the source of a scenario given as bytes without a file
// system: it has nothing to extend.
type noSource struct{}

func (noSource) read(name string) ([]byte, error) {
	return nil, fmt.Errorf("no file system to read %s from; load the scenario with Load or give LoadBytes a file system", name)
}

func (noSource) join(from, extends string) (string, error) {
	return "", errors.New("this scenario was given as bytes without a file system, so it cannot extend another file; load it with Load or give LoadBytes a file system")
}

// A scenario given as bytes without a file system finds its data in the
// operating system's file system, relative to the name it was given under.
func (noSource) locateData(from, file string) (string, fs.FS, error) {
	return osSource{}.locateData(from, file)
}

func readLimited(r io.Reader) ([]byte, error) {
	data, err := io.ReadAll(io.LimitReader(r, maxFileBytes+1))
	if err != nil {
		return nil, err
	}
	if len(data) > maxFileBytes {
		return nil, errTooBig
	}
	return data, nil
}

var errTooBig = fmt.Errorf("file is larger than %d bytes; scenario files are small text files (was a catalog given by mistake?)", maxFileBytes)
