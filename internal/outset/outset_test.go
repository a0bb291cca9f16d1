package outset

import (
	"errors"
	"io"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"syscall"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

func write(t *testing.T, s *Set, name, text string) {
	t.Helper()
	require.NoError(t, s.Write(name, func(w io.Writer) error {
		_, err := io.WriteString(w, text)
		return err
	}))
}

// visible lists the folder's entries a user sees (names not starting with a dot).
func visible(t *testing.T, dir string) []string {
	t.Helper()
	var out []string
	err := filepath.WalkDir(dir, func(p string, d os.DirEntry, err error) error {
		if err != nil {
			return err
		}
		if strings.HasPrefix(d.Name(), ".") && p != dir {
			if d.IsDir() {
				return filepath.SkipDir
			}
			return nil
		}
		if !d.IsDir() {
			rel, _ := filepath.Rel(dir, p)
			out = append(out, filepath.ToSlash(rel))
		}
		return nil
	})
	require.NoError(t, err)
	slices.Sort(out)
	return out
}

func all(t *testing.T, dir string) []string {
	t.Helper()
	es, err := os.ReadDir(dir)
	require.NoError(t, err)
	var out []string
	for _, e := range es {
		out = append(out, e.Name())
	}
	return out
}

func read(t *testing.T, p string) string {
	t.Helper()
	b, err := os.ReadFile(p)
	require.NoError(t, err)
	return string(b)
}

func TestNothingVisibleBeforeCommit(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "out")
	s, err := Open(dir, Options{})
	require.NoError(t, err)
	write(t, s, "a.png", "A")
	write(t, s, "sub/b.csv", "B")
	assert.Empty(t, visible(t, dir), "staged files must not show before Commit")
	require.NoError(t, s.Commit())
	assert.Equal(t, []string{"a.png", "sub/b.csv"}, visible(t, dir))
	assert.Equal(t, "B", read(t, filepath.Join(dir, "sub", "b.csv")))
	// Only the index remains of the bookkeeping.
	assert.ElementsMatch(t, []string{"a.png", "sub", IndexName}, all(t, dir))
}

func TestFolderMadeByAFailedRunGoesToo(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "new")
	s, err := Open(dir, Options{})
	require.NoError(t, err)
	write(t, s, "a.png", "A")
	require.NoError(t, s.Close())
	_, err = os.Stat(dir)
	assert.ErrorIs(t, err, os.ErrNotExist, "a run that made the folder and failed leaves no folder")
}

func TestCloseWithoutCommitLeavesNothing(t *testing.T) {
	dir := t.TempDir()
	s, err := Open(dir, Options{})
	require.NoError(t, err)
	write(t, s, "catalog.csv", "rows")
	f, err := s.Create("big.csv")
	require.NoError(t, err)
	_, err = f.Write([]byte("half"))
	require.NoError(t, err)
	require.NoError(t, s.Close()) // an interrupted run: f never closed
	f.f.Close()
	assert.Empty(t, all(t, dir))
}

func TestForceReplacesPreviousRunWhole(t *testing.T) {
	dir := t.TempDir()
	require.NoError(t, os.WriteFile(filepath.Join(dir, "notes.txt"), []byte("mine"), 0o644))
	s, err := Open(dir, Options{Force: true})
	require.NoError(t, err)
	write(t, s, "plot1.png", "run1")
	write(t, s, "plot2.png", "run1")
	write(t, s, "manifest.json", "run1")
	require.NoError(t, s.Commit())

	// The second run writes fewer files: plot2.png of run 1 must go.
	_, err = Open(dir, Options{})
	assert.ErrorIs(t, err, ErrNotEmpty)
	s, err = Open(dir, Options{Force: true})
	require.NoError(t, err)
	write(t, s, "plot1.png", "run2")
	write(t, s, "manifest.json", "run2")
	require.NoError(t, s.Commit())
	assert.Equal(t, []string{"manifest.json", "notes.txt", "plot1.png"}, visible(t, dir))
	assert.Equal(t, "run2", read(t, filepath.Join(dir, "plot1.png")))
	assert.Equal(t, "mine", read(t, filepath.Join(dir, "notes.txt")), "the user's own file is never touched")
}

func TestSecondRunIsRefusedWhileFirstHoldsFolder(t *testing.T) {
	dir := t.TempDir()
	s, err := Open(dir, Options{})
	require.NoError(t, err)
	_, err = Open(dir, Options{Force: true})
	assert.ErrorIs(t, err, ErrBusy)
	require.NoError(t, s.Close())
	s2, err := Open(dir, Options{})
	require.NoError(t, err, "the lock goes with the first run")
	require.NoError(t, s2.Close())
}

func TestKilledRunIsCleanedUpByTheNext(t *testing.T) {
	dir := t.TempDir()
	// What kill -9 leaves: a staging folder with a half-written file.
	require.NoError(t, os.MkdirAll(filepath.Join(dir, stagePrefix+"123", "x"), 0o755))
	require.NoError(t, os.WriteFile(filepath.Join(dir, stagePrefix+"123", "x", "c.csv"), []byte("half"), 0o644))
	s, err := Open(dir, Options{})
	require.NoError(t, err, "a staging folder alone does not make the folder non-empty")
	assert.True(t, s.Recovered)
	require.NoError(t, s.Close())
	assert.Empty(t, all(t, dir))
}

func TestUnfinishedPublicationIsRemovedWithForce(t *testing.T) {
	dir := t.TempDir()
	// A run killed inside Commit: index unfinished, a mixture on disk.
	require.NoError(t, os.WriteFile(filepath.Join(dir, IndexName), []byte(`{"complete": false, "files": ["old.png", "new.png", "../escape"]}`), 0o644))
	for _, n := range []string{"old.png", "new.png"} {
		require.NoError(t, os.WriteFile(filepath.Join(dir, n), nil, 0o644))
	}
	_, err := Open(dir, Options{})
	assert.ErrorIs(t, err, ErrNotEmpty)
	s, err := Open(dir, Options{Force: true})
	require.NoError(t, err)
	assert.True(t, s.Recovered)
	write(t, s, "fresh.json", "{}")
	require.NoError(t, s.Commit())
	assert.Equal(t, []string{"fresh.json"}, visible(t, dir))
}

func TestReportsArePublishedLast(t *testing.T) {
	s := &Set{names: []string{"manifest.json", "a.png", "report.html", "catalog.csv", "sub/test.json", "b.png"}}
	assert.Equal(t, []string{"a.png", "catalog.csv", "b.png", "manifest.json", "report.html", "sub/test.json"}, s.publishOrder())
}

// A report that embeds the set's figures reads them before publication;
// a name not in the set is refused.
func TestReadStaged(t *testing.T) {
	dir := t.TempDir()
	s, err := Open(dir, Options{})
	require.NoError(t, err)
	defer s.Close()
	write(t, s, "a.png", "png bytes")
	b, err := s.ReadStaged("a.png")
	require.NoError(t, err)
	assert.Equal(t, "png bytes", string(b))
	_, err = os.Stat(filepath.Join(dir, "a.png"))
	assert.True(t, os.IsNotExist(err), "not published yet")
	_, err = s.ReadStaged("b.png")
	assert.Error(t, err)
}

func TestNamesStayInside(t *testing.T) {
	s, err := Open(t.TempDir(), Options{})
	require.NoError(t, err)
	defer s.Close()
	for _, bad := range []string{"", "../x", "/etc/x", "a/../../x", ".spinpop-outputs", "a//b", "./a"} {
		_, err := s.Create(bad)
		assert.Error(t, err, bad)
	}
}

func TestCallbackErrorsAreNotWriteErrors(t *testing.T) {
	s, err := Open(t.TempDir(), Options{})
	require.NoError(t, err)
	defer s.Close()
	bad := errors.New("catalog.csv line 3: not a number")
	err = s.Write("rejected.csv", func(io.Writer) error { return bad })
	assert.Equal(t, bad, err, "an error of the input is not reported as a failure to write")
	var ioe *IOError
	assert.False(t, errors.As(err, &ioe))
}

// TestFullDisk writes to a file whose writes fail with ENOSPC the way a
// full disk's do (/dev/full, a Linux device that answers every write
// with ENOSPC — documented in full(4)).
func TestFullDisk(t *testing.T) {
	dev, err := os.OpenFile("/dev/full", os.O_WRONLY, 0)
	if err != nil {
		t.Skip("/dev/full not available:", err)
	}
	f := &File{f: dev, final: "out/catalog.csv"}
	_, err = f.Write([]byte("row\n"))
	var ioe *IOError
	require.True(t, errors.As(err, &ioe))
	assert.ErrorIs(t, err, syscall.ENOSPC)
	assert.Contains(t, err.Error(), "out/catalog.csv")
	assert.Equal(t, err, f.Close())
}

func TestReadOnlyFolder(t *testing.T) {
	if os.Geteuid() == 0 {
		t.Skip("running as root, which ignores folder permissions; the read-only case cannot be made here")
	}
	dir := t.TempDir()
	require.NoError(t, os.Chmod(dir, 0o555))
	defer os.Chmod(dir, 0o755)
	_, err := Open(dir, Options{})
	var ioe *IOError
	assert.True(t, errors.As(err, &ioe), "a read-only folder is a failure to write, got %v", err)
}

func TestDiscard(t *testing.T) {
	dir := t.TempDir()
	s, err := Open(dir, Options{})
	require.NoError(t, err)
	write(t, s, "catalog.csv", "too big")
	write(t, s, "manifest.json", "{}")
	require.NoError(t, s.Discard("catalog.csv"))
	assert.Equal(t, []string{"manifest.json"}, s.Names())
	require.NoError(t, s.Commit())
	assert.Equal(t, []string{"manifest.json"}, visible(t, dir))
}

// A write error names the file the user will see, not the staging file.
func TestErrorsNameTheFinalPath(t *testing.T) {
	err := &IOError{Op: "writing", Path: "out/laws.png", Err: &os.PathError{Op: "write", Path: "out/.spinpop-stage-1/laws.png", Err: syscall.ENOSPC}}
	assert.Equal(t, "writing out/laws.png: no space left on device", err.Error())
	assert.ErrorIs(t, err, syscall.ENOSPC)
}
