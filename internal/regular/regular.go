// Package regular opens files for reading only when they are regular
// files. A FIFO, a socket or a device given where a scenario or a catalog
// is expected would block the program for ever (opening a FIFO waits for a
// writer) or feed it an endless stream (/dev/zero); refusing them with a
// message is the only useful answer.
package regular

import (
	"fmt"
	"io"
	"io/fs"
	"os"
)

// NotRegularError says a path names something other than a regular file.
type NotRegularError struct {
	Path string
	Mode fs.FileMode
}

func (e *NotRegularError) Error() string {
	return fmt.Sprintf("%s is %s, not a regular file; give the path of an ordinary file (copy the stream to a file first)", e.Path, Describe(e.Mode))
}

// Describe names a file mode's type in words.
func Describe(m fs.FileMode) string {
	switch {
	case m&fs.ModeNamedPipe != 0:
		return "a named pipe (FIFO)"
	case m&fs.ModeSocket != 0:
		return "a socket"
	case m&fs.ModeCharDevice != 0:
		return "a character device"
	case m&fs.ModeDevice != 0:
		return "a block device"
	case m.IsDir():
		return "a folder"
	case m&fs.ModeIrregular != 0:
		return "a file of unknown type"
	}
	return "not a regular file"
}

// ReadFile reads the whole of path if it is a regular file (see Open).
func ReadFile(path string) ([]byte, error) {
	f, err := Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	return io.ReadAll(f)
}

// Open opens path for reading if it is a regular file (symbolic links are
// followed). The type is checked before opening, so that a FIFO is never
// opened (which would block), and again on the open file, so that a path
// swapped in between is caught too.
func Open(path string) (*os.File, error) {
	st, err := os.Stat(path)
	if err != nil {
		return nil, err
	}
	if !st.Mode().IsRegular() {
		return nil, &NotRegularError{Path: path, Mode: st.Mode()}
	}
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	if st, err = f.Stat(); err != nil {
		f.Close()
		return nil, err
	}
	if !st.Mode().IsRegular() {
		f.Close()
		return nil, &NotRegularError{Path: path, Mode: st.Mode()}
	}
	return f, nil
}
