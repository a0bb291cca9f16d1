package compare

import (
	"crypto/rand"
	"encoding/hex"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"sync"
	"time"
)

// The template cache's build lock. One file per template key,
// <key>.tpl.lock, created with O_EXCL (atomic on local file systems and on
// NFS v3 and later), holding a random token so that a caller removes only
// its own lock. Waiters poll for the finished template file; polling, not
// file-system notification, because notifications do not cross machines.

// LockStaleAfter is how long a build lock may go without being refreshed
// before waiters take its builder for dead and break it. Builders refresh
// it every LockStaleAfter/4. Machines sharing a cache need clocks within a
// fraction of this of each other (clusters keep them within milliseconds).
var LockStaleAfter = 2 * time.Minute

// lockPoll bounds the wait between two looks at a lock held by another.
const lockPoll = 500 * time.Millisecond

type buildLock struct {
	path  string
	token string
	stop  chan struct{}
	done  sync.WaitGroup
}

// lockOrWait takes the build lock of the template file path, or, while
// another caller holds it, waits for that caller's file. It returns the
// lock (the caller builds) or the templates the other caller wrote.
func lockOrWait(path, key string) (*buildLock, *Templates, error) {
	lockPath := path + ".lock"
	wait := 20 * time.Millisecond
	for {
		lk, err := tryLock(lockPath)
		if err == nil {
			return lk, nil, nil
		}
		if !errors.Is(err, fs.ErrExist) {
			return nil, nil, fmt.Errorf("compare: template cache lock: %w", err)
		}
		// Held by another: wait for its result, its release or its death.
		for {
			time.Sleep(wait)
			wait = min(2*wait, lockPoll)
			if t := loadCached(path, key); t != nil {
				return nil, t, nil
			}
			info, err := os.Stat(lockPath)
			if errors.Is(err, fs.ErrNotExist) {
				break // released without a usable file (its build failed): try to build
			}
			if err == nil && time.Since(info.ModTime()) > LockStaleAfter {
				breakStaleLock(lockPath)
				break
			}
		}
	}
}

// tryLock creates the lock file exclusively and starts refreshing it.
func tryLock(lockPath string) (*buildLock, error) {
	f, err := os.OpenFile(lockPath, os.O_WRONLY|os.O_CREATE|os.O_EXCL, 0o644)
	if err != nil {
		return nil, err
	}
	var raw [16]byte
	_, _ = rand.Read(raw[:])
	lk := &buildLock{path: lockPath, token: hex.EncodeToString(raw[:]), stop: make(chan struct{})}
	host, _ := os.Hostname()
	_, werr := fmt.Fprintf(f, "%s\nhost %s pid %d: building this template\n", lk.token, host, os.Getpid())
	if cerr := f.Close(); werr == nil {
		werr = cerr
	}
	if werr != nil {
		os.Remove(lockPath)
		return nil, werr
	}
	lk.done.Add(1)
	go lk.refresh()
	return lk, nil
}

// refresh keeps the lock's modification time recent while the build runs.
func (lk *buildLock) refresh() {
	defer lk.done.Done()
	tick := time.NewTicker(max(LockStaleAfter/4, time.Millisecond))
	defer tick.Stop()
	for {
		select {
		case <-lk.stop:
			return
		case <-tick.C:
			now := time.Now()
			_ = os.Chtimes(lk.path, now, now)
		}
	}
}

// release stops refreshing and removes the lock if it is still this
// caller's (a waiter may have broken it as stale and another taken it).
func (lk *buildLock) release() {
	close(lk.stop)
	lk.done.Wait()
	if b, err := os.ReadFile(lk.path); err == nil && len(b) >= len(lk.token) && string(b[:len(lk.token)]) == lk.token {
		os.Remove(lk.path)
	}
}

// breakStaleLock removes a lock whose builder stopped refreshing it, unless
// it changed hands meanwhile. Two waiters breaking the same lock at once can
// at worst both build: duplicate work, never a damaged file.
func breakStaleLock(lockPath string) {
	before, err := os.ReadFile(lockPath)
	if err != nil {
		return
	}
	info, err := os.Stat(lockPath)
	if err != nil || time.Since(info.ModTime()) <= LockStaleAfter {
		return
	}
	if now, err := os.ReadFile(lockPath); err == nil && string(now) == string(before) {
		os.Remove(lockPath)
	}
}
