package compare

import (
	"bytes"
	"crypto/sha256"
	"encoding/binary"
	"encoding/gob"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
)

// Template files.
//
// A file is: the 8-byte magic "spnptpl\n", a little-endian uint32 format
// version, a uint64 payload length, the payload (a gob of the Templates),
// and the SHA-256 of the payload. The checksum makes a truncated or
// damaged file detectable, so Cached rebuilds it instead of trusting it.

var tplMagic = [8]byte{'s', 'p', 'n', 'p', 't', 'p', 'l', '\n'}

// TemplateFormatVersion is the version Save writes and LoadTemplates
// accepts. Raise it whenever the meaning of a template changes.
const TemplateFormatVersion uint32 = 1

// maxTemplatePayload bounds the payload a file may declare (1 GiB), so a
// damaged length field cannot make LoadTemplates allocate without limit.
const maxTemplatePayload = 1 << 30

// Save writes the templates in the versioned binary format.
func (t *Templates) Save(w io.Writer) error {
	var buf bytes.Buffer
	if err := gob.NewEncoder(&buf).Encode(t); err != nil {
		return fmt.Errorf("compare: encoding templates: %w", err)
	}
	var head [20]byte
	copy(head[:8], tplMagic[:])
	binary.LittleEndian.PutUint32(head[8:12], TemplateFormatVersion)
	binary.LittleEndian.PutUint64(head[12:20], uint64(buf.Len()))
	sum := sha256.Sum256(buf.Bytes())
	for _, b := range [][]byte{head[:], buf.Bytes(), sum[:]} {
		if _, err := w.Write(b); err != nil {
			return fmt.Errorf("compare: writing templates: %w", err)
		}
	}
	return nil
}

// LoadTemplates reads templates written by Save. A wrong magic, another
// format version, a short file or a checksum mismatch is an error.
func LoadTemplates(r io.Reader) (*Templates, error) {
	var head [20]byte
	if _, err := io.ReadFull(r, head[:]); err != nil {
		return nil, fmt.Errorf("compare: template file too short for its header: %w", err)
	}
	if !bytes.Equal(head[:8], tplMagic[:]) {
		return nil, errors.New("compare: not a template file (wrong magic bytes); template files are written by spinpop")
	}
	if v := binary.LittleEndian.Uint32(head[8:12]); v != TemplateFormatVersion {
		return nil, fmt.Errorf("compare: template file has format version %d; this program reads version %d, so the templates must be rebuilt", v, TemplateFormatVersion)
	}
	n := binary.LittleEndian.Uint64(head[12:20])
	if n > maxTemplatePayload {
		return nil, fmt.Errorf("compare: template file declares a %d-byte payload, beyond the %d-byte limit; the file is damaged", n, maxTemplatePayload)
	}
	payload := make([]byte, n+sha256.Size)
	if _, err := io.ReadFull(r, payload); err != nil {
		return nil, fmt.Errorf("compare: template file is truncated: %w", err)
	}
	body, sum := payload[:n], payload[n:]
	if got := sha256.Sum256(body); !bytes.Equal(got[:], sum) {
		return nil, errors.New("compare: template file checksum mismatch; the file is damaged")
	}
	t := new(Templates)
	if err := gob.NewDecoder(bytes.NewReader(body)).Decode(t); err != nil {
		return nil, fmt.Errorf("compare: decoding templates: %w", err)
	}
	if err := t.check(); err != nil {
		return nil, err
	}
	return t, nil
}

// check verifies that a Templates value is self-consistent.
func (t *Templates) check() error {
	if err := t.Space.validate(); err != nil {
		return err
	}
	nk := len(t.AgeEdgesGyr) - 1
	if nk < 1 {
		return errors.New("compare: templates have no age bins")
	}
	if len(t.Counts) != nk*t.Space.NumBins() {
		return fmt.Errorf("compare: templates hold %d counts; %d age bins × %d space bins need %d", len(t.Counts), nk, t.Space.NumBins(), nk*t.Space.NumBins())
	}
	if len(t.DrawnPerBin) != nk {
		return fmt.Errorf("compare: templates have %d per-bin draw counts for %d age bins", len(t.DrawnPerBin), nk)
	}
	if t.Var != nil && len(t.Var) != len(t.Counts) {
		return fmt.Errorf("compare: templates hold %d variances for %d counts", len(t.Var), len(t.Counts))
	}
	return nil
}

// Cached returns the templates stored as dir/<key>.tpl when that file is
// present, intact and made for key (reused = true). Otherwise it calls
// build, sets the result's Key, writes it to dir/<key>.tpl atomically
// (a temporary file in dir renamed over the target) and returns it. The
// key is computed by the caller from everything the templates depend on;
// it must be a plain file name (letters, digits, '-', '_', '.').
//
// Cached is safe for concurrent callers, goroutines or processes on other
// machines sharing dir over a network file system: a lock file
// (dir/<key>.tpl.lock, created exclusively) lets one caller build while the
// others wait for its file and then read it (reused = true). A builder
// refreshes the lock's time while it works; a lock not refreshed for
// LockStaleAfter is taken to be left by a dead builder and is broken. Even
// then two builders cannot corrupt the file: each writes its own temporary
// file and renames it into place whole, and both write the same bytes.
func Cached(dir, key string, build func() (*Templates, error)) (*Templates, bool, error) {
	return CachedOrBuild(dir, key, build, nil)
}

// CacheError is a template cache that cannot be used (a folder that
// cannot be made or written, a full disk): the templates are still good.
type CacheError struct{ Err error }

func (e *CacheError) Error() string { return "template cache: " + e.Err.Error() }
func (e *CacheError) Unwrap() error { return e.Err }

// CachedOrBuild is Cached that, with warn set, treats a cache it cannot
// create, lock or write as no cache: warn is told (a *CacheError) and the
// templates are built, or kept once built, and returned. A cache is a
// convenience; a run should not fail for it.
func CachedOrBuild(dir, key string, build func() (*Templates, error), warn func(error)) (*Templates, bool, error) {
	if err := checkKey(key); err != nil {
		return nil, false, err
	}
	path := filepath.Join(dir, key+".tpl")
	if t := loadCached(path, key); t != nil {
		return t, true, nil
	}
	if err := os.MkdirAll(dir, 0o755); err != nil {
		err = fmt.Errorf("compare: template cache directory: %w", err)
		if warn == nil {
			return nil, false, err
		}
		warn(&CacheError{err})
		t, err := build()
		return t, false, err
	}
	lk, t, err := lockOrWait(path, key)
	if err != nil && warn != nil {
		warn(&CacheError{err})
		t, err := build()
		return t, false, err
	}
	if err != nil || t != nil {
		return t, t != nil, err
	}
	defer lk.release()
	// Another caller may have finished between the first look and the lock.
	if t := loadCached(path, key); t != nil {
		return t, true, nil
	}
	t, err = build()
	if err != nil {
		return nil, false, err
	}
	t.Key = key
	if err := writeTemplates(dir, path, t); err != nil {
		if warn == nil {
			return nil, false, err
		}
		warn(&CacheError{err})
	}
	return t, false, nil
}

// loadCached returns the templates in path when they are intact and made
// for key; nil when the file is missing, damaged, outdated or foreign (the
// caller rebuilds it).
func loadCached(path, key string) *Templates {
	f, err := os.Open(path)
	if err != nil {
		return nil
	}
	defer f.Close()
	t, err := LoadTemplates(f)
	if err != nil || t.Key != key {
		return nil
	}
	return t
}

// writeTemplates writes t to a temporary file in dir, syncs it and renames
// it to path, so that a reader sees the old file or the whole new one.
func writeTemplates(dir, path string, t *Templates) error {
	tmp, err := os.CreateTemp(dir, filepath.Base(path)+".tmp-*")
	if err != nil {
		return fmt.Errorf("compare: template cache: %w", err)
	}
	defer os.Remove(tmp.Name()) // no-op after a successful rename
	if err := t.Save(tmp); err != nil {
		tmp.Close()
		return err
	}
	if err := tmp.Sync(); err != nil {
		tmp.Close()
		return fmt.Errorf("compare: template cache: %w", err)
	}
	if err := tmp.Close(); err != nil {
		return fmt.Errorf("compare: template cache: %w", err)
	}
	if err := os.Rename(tmp.Name(), path); err != nil {
		return fmt.Errorf("compare: template cache: %w", err)
	}
	return nil
}

func checkKey(key string) error {
	if key == "" || key == "." || key == ".." {
		return fmt.Errorf("compare: template cache key %q: want a non-empty file name such as a hex hash", key)
	}
	for _, r := range key {
		if !(r == '-' || r == '_' || r == '.' || ('a' <= r && r <= 'z') || ('A' <= r && r <= 'Z') || ('0' <= r && r <= '9')) {
			return fmt.Errorf("compare: template cache key %q contains %q; use only letters, digits, '-', '_' and '.'", key, r)
		}
	}
	return nil
}
