package scenarios

import (
	"os"
	"path/filepath"
	"syscall"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// A FIFO given as the scenario, as an extends target or as data.file used
// to block for ever (opening a FIFO waits for a writer). Each is refused
// with a message naming it; the test would hang if one were opened.
func TestFIFOsAreRefused(t *testing.T) {
	dir := t.TempDir()
	fifo := filepath.Join(dir, "pipe.toml")
	if err := syscall.Mkfifo(fifo, 0o600); err != nil {
		t.Skipf("cannot make a FIFO here: %v", err)
	}
	_, err := Load(fifo)
	require.Error(t, err)
	assert.Contains(t, err.Error(), "cannot read scenario: "+fifo+" is a named pipe (FIFO), not a regular file")

	child := filepath.Join(dir, "child.toml")
	require.NoError(t, os.WriteFile(child, []byte("extends = \"pipe.toml\"\n"), 0o600))
	_, err = Load(child)
	require.Error(t, err)
	assert.Contains(t, err.Error(), child+":1: extends = \"pipe.toml\": cannot read "+fifo+": "+fifo+" is a named pipe (FIFO)")

	withData := filepath.Join(dir, "data.toml")
	require.NoError(t, os.WriteFile(withData, []byte(minimal+"[data]\nfile = \"pipe.toml\"\n[data.columns]\nperiod_d = \"p\"\nb_v = \"bv\"\nabs_mag_v = \"mv\"\nz_pc = \"z\"\n"), 0o600))
	res, err := Load(withData)
	require.NoError(t, err, "loading does not open the data")
	_, err = res.OpenData()
	require.Error(t, err)
	assert.Contains(t, err.Error(), "data.file = \"pipe.toml\": cannot open "+fifo+": "+fifo+" is a named pipe (FIFO), not a regular file")
}
