package regular

import (
	"errors"
	"os"
	"path/filepath"
	"syscall"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// A FIFO with no writer would block os.Open for ever: Open must refuse it
// without opening it (this test would hang otherwise). Devices and folders
// are refused too; a regular file, also through a symbolic link, opens.
func TestOpenRefusesWhatIsNotARegularFile(t *testing.T) {
	dir := t.TempDir()
	fifo := filepath.Join(dir, "pipe")
	if err := syscall.Mkfifo(fifo, 0o600); err != nil {
		t.Skipf("cannot make a FIFO here: %v", err)
	}
	_, err := Open(fifo)
	var nr *NotRegularError
	require.True(t, errors.As(err, &nr), "got %v", err)
	assert.Contains(t, err.Error(), "is a named pipe (FIFO), not a regular file")

	_, err = Open(os.DevNull)
	require.True(t, errors.As(err, &nr), "got %v", err)
	assert.Contains(t, err.Error(), "is a character device, not a regular file")

	_, err = Open(dir)
	assert.Contains(t, err.Error(), "is a folder, not a regular file")

	file := filepath.Join(dir, "a.txt")
	require.NoError(t, os.WriteFile(file, []byte("x"), 0o600))
	link := filepath.Join(dir, "link")
	require.NoError(t, os.Symlink(file, link))
	for _, p := range []string{file, link} {
		f, err := Open(p)
		require.NoError(t, err)
		f.Close()
	}
	_, err = Open(filepath.Join(dir, "missing"))
	assert.True(t, errors.Is(err, os.ErrNotExist))
}

func TestReadFile(t *testing.T) {
	dir := t.TempDir()
	file := filepath.Join(dir, "a.txt")
	require.NoError(t, os.WriteFile(file, []byte("hello"), 0o600))
	b, err := ReadFile(file)
	require.NoError(t, err)
	assert.Equal(t, "hello", string(b))
	_, err = ReadFile(os.DevNull)
	assert.Contains(t, err.Error(), "is a character device, not a regular file")
}
