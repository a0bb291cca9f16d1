package compare

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"sync"
	"sync/atomic"
	"testing"
	"time"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// Goroutines racing for the same template: one builds, the others wait
// and read its file; all get the same templates and the file is whole.
// Common practice (a lock file created exclusively), no source.
func TestCachedConcurrentGoroutinesBuildOnce(t *testing.T) {
	tpl := randomTemplates(t, 4, 3, 5, 2, 4, 1)
	dir := t.TempDir()
	var builds atomic.Int32
	build := func() (*Templates, error) {
		builds.Add(1)
		time.Sleep(150 * time.Millisecond) // long enough for every caller to arrive
		c := *tpl
		return &c, nil
	}
	const callers = 8
	got := make([]*Templates, callers)
	reused := make([]bool, callers)
	var wg sync.WaitGroup
	for i := range callers {
		wg.Go(func() {
			var err error
			got[i], reused[i], err = Cached(dir, "race", build)
			assert.NoError(t, err)
		})
	}
	wg.Wait()
	assert.EqualValues(t, 1, builds.Load(), "exactly one caller builds")
	nReused := 0
	for i := range callers {
		require.NotNil(t, got[i])
		assert.Equal(t, tpl.Counts, got[i].Counts)
		if reused[i] {
			nReused++
		}
	}
	assert.Equal(t, callers-1, nReused)
	entries, err := os.ReadDir(dir)
	require.NoError(t, err)
	require.Len(t, entries, 1, "no lock or temporary file left behind")
	f, err := os.Open(filepath.Join(dir, "race.tpl"))
	require.NoError(t, err)
	defer f.Close()
	_, err = LoadTemplates(f)
	assert.NoError(t, err, "the file is whole and its checksum holds")
}

// A builder that fails releases the lock; a waiter then builds.
func TestCachedWaiterTakesOverAfterFailedBuild(t *testing.T) {
	tpl := randomTemplates(t, 3, 2, 4, 0, 4, 2)
	dir := t.TempDir()
	started := make(chan struct{})
	var failErr, okErr error
	var okReused bool
	var wg sync.WaitGroup
	wg.Go(func() {
		_, _, failErr = Cached(dir, "k", func() (*Templates, error) {
			close(started)
			time.Sleep(100 * time.Millisecond)
			return nil, errors.New("build failed")
		})
	})
	<-started
	wg.Go(func() {
		_, okReused, okErr = Cached(dir, "k", func() (*Templates, error) { c := *tpl; return &c, nil })
	})
	wg.Wait()
	assert.ErrorContains(t, failErr, "build failed")
	assert.NoError(t, okErr)
	assert.False(t, okReused, "the waiter built the templates itself")
}

// A lock left by a dead builder (not refreshed) is broken, not waited on
// for ever.
func TestCachedBreaksStaleLock(t *testing.T) {
	tpl := randomTemplates(t, 3, 2, 4, 0, 4, 3)
	dir := t.TempDir()
	lock := filepath.Join(dir, "k.tpl.lock")
	require.NoError(t, os.WriteFile(lock, []byte("token\nhost gone pid 1\n"), 0o644))
	old := time.Now().Add(-2 * LockStaleAfter)
	require.NoError(t, os.Chtimes(lock, old, old))
	got, reused, err := Cached(dir, "k", func() (*Templates, error) { c := *tpl; return &c, nil })
	require.NoError(t, err)
	assert.False(t, reused)
	assert.Equal(t, tpl.Counts, got.Counts)
	_, err = os.Stat(lock)
	assert.True(t, errors.Is(err, os.ErrNotExist), "the stale lock is gone")
}

// cacheRaceEnv makes the test binary a helper process that fetches one
// template through Cached and prints a digest of it.
const cacheRaceEnv = "SPINPOP_TEST_CACHE_RACE_DIR"

func TestCachedHelperProcess(t *testing.T) {
	dir := os.Getenv(cacheRaceEnv)
	if dir == "" {
		t.Skip("helper process for TestCachedConcurrentProcesses; runs only when started by it")
	}
	tpl := randomTemplates(t, 6, 4, 8, 3, 50, 9)
	got, reused, err := Cached(dir, "shared", func() (*Templates, error) {
		f, err := os.OpenFile(filepath.Join(dir, "builds.log"), os.O_APPEND|os.O_CREATE|os.O_WRONLY, 0o644)
		require.NoError(t, err)
		fmt.Fprintf(f, "pid %d\n", os.Getpid())
		require.NoError(t, f.Close())
		time.Sleep(300 * time.Millisecond)
		c := *tpl
		return &c, nil
	})
	require.NoError(t, err)
	var buf bytes.Buffer
	require.NoError(t, got.Save(&buf))
	sum := sha256.Sum256(buf.Bytes())
	fmt.Printf("DIGEST %s reused=%v\n", hex.EncodeToString(sum[:]), reused)
}

// Two processes building the same template at once, as two array tasks on
// a shared file system would: one builds, the other reads its file, and
// both end with the same bytes.
func TestCachedConcurrentProcesses(t *testing.T) {
	if testing.Short() {
		t.Skip("starts two processes")
	}
	dir := t.TempDir()
	const procs = 3
	outs := make([]bytes.Buffer, procs)
	cmds := make([]*exec.Cmd, procs)
	for i := range cmds {
		cmds[i] = exec.Command(os.Args[0], "-test.run=^TestCachedHelperProcess$", "-test.v")
		cmds[i].Env = append(os.Environ(), cacheRaceEnv+"="+dir)
		cmds[i].Stdout, cmds[i].Stderr = &outs[i], &outs[i]
	}
	for _, c := range cmds {
		require.NoError(t, c.Start())
	}
	digests := map[string]int{}
	reusedCount := 0
	for i, c := range cmds {
		require.NoError(t, c.Wait(), outs[i].String())
		for _, line := range strings.Split(outs[i].String(), "\n") {
			if d, ok := strings.CutPrefix(line, "DIGEST "); ok {
				fields := strings.Fields(d)
				digests[fields[0]]++
				if fields[1] == "reused=true" {
					reusedCount++
				}
			}
		}
	}
	assert.Len(t, digests, 1, "every process got the same templates")
	for _, n := range digests {
		assert.Equal(t, procs, n)
	}
	log, err := os.ReadFile(filepath.Join(dir, "builds.log"))
	require.NoError(t, err)
	assert.Equal(t, 1, strings.Count(string(log), "pid "), "exactly one process built: %s", log)
	assert.Equal(t, procs-1, reusedCount)
}

// A cache that cannot be made (here its folder would sit below a plain
// file, which fails for root too) is no cache: the templates are built,
// the caller is warned, and the run goes on.
func TestCachedOrBuildWithoutUsableCache(t *testing.T) {
	tpl := randomTemplates(t, 3, 2, 4, 0, 4, 3)
	file := filepath.Join(t.TempDir(), "plain-file")
	require.NoError(t, os.WriteFile(file, nil, 0o644))
	var warned []error
	got, reused, err := CachedOrBuild(filepath.Join(file, "cache"), "k", func() (*Templates, error) { c := *tpl; return &c, nil },
		func(e error) { warned = append(warned, e) })
	require.NoError(t, err)
	assert.False(t, reused)
	assert.Equal(t, tpl.Counts, got.Counts)
	require.Len(t, warned, 1)
	var ce *CacheError
	assert.True(t, errors.As(warned[0], &ce))
	// Without a warn function the old contract holds: the error is returned.
	_, _, err = Cached(filepath.Join(file, "cache"), "k", func() (*Templates, error) { c := *tpl; return &c, nil })
	assert.Error(t, err)
}
