// Package outset writes one run's output files as a set: whole or not at
// all, never mixed with another run's.
//
// Open locks the output folder (flock(2) on the folder itself, so the lock
// vanishes with the process, even after kill -9, and leaves no file
// behind), checks that the folder is empty unless forced, and makes a
// private staging folder inside it (".spinpop-stage-*"). Files are written
// there. Commit publishes them: it first records the old and new file
// names in the folder's index (".spinpop-outputs", marked unfinished),
// removes every file the previous run published (its index lists them),
// renames the new files into the folder — the .json files last, so a
// report or manifest is present only beside the complete set it describes
// — and rewrites the index, marked finished. Close without Commit removes
// the staging folder: an interrupted or failed run leaves nothing.
//
// A run killed outright (SIGKILL, power loss) can leave a staging folder,
// or, if killed inside Commit, a partly published set whose index says
// unfinished; the next run in the folder (it holds the lock, so nobody
// else is using them) removes both.
//
// Files of the user's own in the folder are never touched: only names in
// the index, which lists what this tool published, are removed.
package outset

import (
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"syscall"
)

// Hidden names of this package in an output folder.
const (
	stagePrefix = ".spinpop-stage-"
	// IndexName is the index of the files the last run published.
	IndexName = ".spinpop-outputs"
	hidden    = ".spinpop-"
)

// ErrBusy is returned (wrapped) by Open when another run holds the folder.
var ErrBusy = errors.New("another run is writing into this folder")

// ErrNotEmpty is returned (wrapped) by Open when the folder holds files
// and Force is off.
var ErrNotEmpty = errors.New("the output folder is not empty")

// IOError is a failure to read or write the output folder: a run
// failure (permissions, a full disk), not a fault of the user's input.
type IOError struct {
	Op   string // "writing", "creating", "publishing", ...
	Path string // the path the user will know (the final one, not the staging one)
	Err  error
}

func (e *IOError) Error() string {
	err := e.Err
	// The path the user knows is Path; an *os.PathError inside would
	// name the private staging file instead.
	var pe *fs.PathError
	if errors.As(err, &pe) {
		err = pe.Err
	}
	return e.Op + " " + e.Path + ": " + err.Error()
}
func (e *IOError) Unwrap() error { return e.Err }

// Options tune Open.
type Options struct {
	// Force allows a folder that already holds files; the previous run's
	// files (those in the index) are replaced by Commit, others kept.
	Force bool
}

// Set is one run's output files, staged until Commit.
type Set struct {
	dir, stage string
	lock       *os.File
	names      []string // relative names, in the order first written
	committed  bool
	closed     bool
	made       bool // Open made the folder: Close without Commit removes it again
	// Recovered says that Open removed what an earlier, killed run left
	// (a staging folder or an unfinished publication).
	Recovered bool
}

// Open prepares dir (created if missing) for one run's outputs.
func Open(dir string, opt Options) (*Set, error) {
	if dir == "" {
		return nil, errors.New("outset: no output folder named")
	}
	_, statErr := os.Stat(dir)
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return nil, &IOError{"creating output folder", dir, err}
	}
	lk, err := os.Open(dir)
	if err != nil {
		return nil, &IOError{"opening output folder", dir, err}
	}
	if err := syscall.Flock(int(lk.Fd()), syscall.LOCK_EX|syscall.LOCK_NB); err != nil {
		lk.Close()
		if errors.Is(err, syscall.EWOULDBLOCK) {
			return nil, fmt.Errorf("%s: %w", dir, ErrBusy)
		}
		return nil, &IOError{"locking output folder", dir, err}
	}
	s := &Set{dir: dir, lock: lk, made: errors.Is(statErr, os.ErrNotExist)}
	ok := false
	defer func() {
		if !ok {
			s.Close()
		}
	}()
	entries, err := os.ReadDir(dir)
	if err != nil {
		return nil, &IOError{"reading output folder", dir, err}
	}
	var others int
	for _, e := range entries {
		name := e.Name()
		switch {
		case strings.HasPrefix(name, stagePrefix):
			// Left by a run that was killed: we hold the lock, so no
			// live run owns it.
			if err := os.RemoveAll(filepath.Join(dir, name)); err != nil {
				return nil, &IOError{"removing stale staging folder", filepath.Join(dir, name), err}
			}
			s.Recovered = true
		case strings.HasPrefix(name, hidden):
		default:
			others++
		}
	}
	if others > 0 && !opt.Force {
		return nil, fmt.Errorf("%s holds %d entries: %w", dir, others, ErrNotEmpty)
	}
	if idx, err := readIndex(dir); err == nil && !idx.Complete {
		s.Recovered = true
	}
	if s.stage, err = os.MkdirTemp(dir, stagePrefix); err != nil {
		return nil, &IOError{"writing into output folder", dir, err}
	}
	ok = true
	return s, nil
}

// Dir is the output folder.
func (s *Set) Dir() string { return s.dir }

// Names are the files written so far, relative to Dir, in order.
func (s *Set) Names() []string { return slices.Clone(s.names) }

// Has reports whether name has been written.
func (s *Set) Has(name string) bool { return slices.Contains(s.names, name) }

// Final is where name will be once published.
func (s *Set) Final(name string) string { return filepath.Join(s.dir, filepath.FromSlash(name)) }

// checkName keeps names inside the folder and clear of this package's own.
func checkName(name string) error {
	clean := filepath.ToSlash(filepath.Clean(filepath.FromSlash(name)))
	if name == "" || clean != name || strings.HasPrefix(name, "/") || name == "." || strings.HasPrefix(name, "../") || name == ".." {
		return fmt.Errorf("outset: %q is not a plain relative file name", name)
	}
	for _, part := range strings.Split(name, "/") {
		if strings.HasPrefix(part, hidden) {
			return fmt.Errorf("outset: %q uses a name reserved for the output folder's bookkeeping", name)
		}
	}
	return nil
}

// Create makes file name in the staging folder, for writing by streaming;
// the caller closes it (File.Close syncs). Writing the same name again
// replaces it.
func (s *Set) Create(name string) (*File, error) {
	if err := checkName(name); err != nil {
		return nil, err
	}
	if s.committed || s.closed {
		return nil, fmt.Errorf("outset: %s written after the set was published or closed", name)
	}
	p := filepath.Join(s.stage, filepath.FromSlash(name))
	if err := os.MkdirAll(filepath.Dir(p), 0o755); err != nil {
		return nil, &IOError{"writing", s.Final(name), err}
	}
	f, err := os.OpenFile(p, os.O_WRONLY|os.O_CREATE|os.O_TRUNC, 0o644)
	if err != nil {
		return nil, &IOError{"writing", s.Final(name), err}
	}
	if !s.Has(name) {
		s.names = append(s.names, name)
	}
	return &File{f: f, final: s.Final(name)}, nil
}

// ReadStaged returns the contents of file name as written so far, before
// publication: a report that embeds other files of the same set (the
// figures in report.html) reads them here.
func (s *Set) ReadStaged(name string) ([]byte, error) {
	if !s.Has(name) {
		return nil, fmt.Errorf("outset: %s is not in the set", name)
	}
	b, err := os.ReadFile(filepath.Join(s.stage, filepath.FromSlash(name)))
	if err != nil {
		return nil, &IOError{"reading", s.Final(name), err}
	}
	return b, nil
}

// Discard drops file name from the set (a file that turned out not to be
// wanted, such as a catalog over its size limit).
func (s *Set) Discard(name string) error {
	i := slices.Index(s.names, name)
	if i < 0 {
		return nil
	}
	s.names = slices.Delete(s.names, i, i+1)
	if err := os.Remove(filepath.Join(s.stage, filepath.FromSlash(name))); err != nil && !errors.Is(err, os.ErrNotExist) {
		return &IOError{"removing", s.Final(name), err}
	}
	return nil
}

// Write writes file name whole with write. An error of write itself (a
// bad input it was reading, say) is returned as it is; a failure to write
// the file is an *IOError naming the file's final path.
func (s *Set) Write(name string, write func(w io.Writer) error) error {
	f, err := s.Create(name)
	if err != nil {
		return err
	}
	if err := write(f); err != nil {
		f.f.Close()
		if f.err != nil && errors.Is(err, f.err) {
			return f.err
		}
		return err
	}
	return f.Close()
}

// File is a file being written into the staging folder.
type File struct {
	f     *os.File
	final string
	err   *IOError // first write error
}

// Write writes to the file; errors are *IOError naming the final path.
func (f *File) Write(p []byte) (int, error) {
	n, err := f.f.Write(p)
	if err != nil {
		if f.err == nil {
			f.err = &IOError{"writing", f.final, err}
		}
		return n, f.err
	}
	return n, nil
}

// Close syncs and closes the file.
func (f *File) Close() error {
	if f.err != nil {
		f.f.Close()
		return f.err
	}
	if err := f.f.Sync(); err != nil {
		f.f.Close()
		return &IOError{"writing", f.final, err}
	}
	if err := f.f.Close(); err != nil {
		return &IOError{"writing", f.final, err}
	}
	return nil
}

// index is the folder's record of the files this tool published there.
type index struct {
	// Complete is false while a publication is under way: the folder may
	// then hold a mixture, and every name listed is removed by the next
	// run.
	Complete bool     `json:"complete"`
	Files    []string `json:"files"`
}

func readIndex(dir string) (index, error) {
	var idx index
	b, err := os.ReadFile(filepath.Join(dir, IndexName))
	if err != nil {
		return idx, err
	}
	if err := json.Unmarshal(b, &idx); err != nil {
		return index{}, err
	}
	// Only names that could have been ours: never step outside the folder.
	idx.Files = slices.DeleteFunc(idx.Files, func(n string) bool { return checkName(n) != nil })
	return idx, nil
}

func (s *Set) writeIndex(idx index) error {
	b, err := json.MarshalIndent(idx, "", "  ")
	if err != nil {
		return err
	}
	path := filepath.Join(s.dir, IndexName)
	tmp := filepath.Join(s.stage, IndexName)
	if err := os.WriteFile(tmp, append(b, '\n'), 0o644); err != nil {
		return &IOError{"writing", path, err}
	}
	if err := syncPath(tmp); err != nil {
		return &IOError{"writing", path, err}
	}
	if err := os.Rename(tmp, path); err != nil {
		return &IOError{"writing", path, err}
	}
	return nil
}

func syncPath(p string) error {
	f, err := os.Open(p)
	if err != nil {
		return err
	}
	defer f.Close()
	return f.Sync()
}

// publishOrder is the order of publication: .json and .html files
// (reports and manifests, which describe the others) last, otherwise as
// written.
func (s *Set) publishOrder() []string {
	out := slices.Clone(s.names)
	isReport := func(n string) bool { return strings.HasSuffix(n, ".json") || strings.HasSuffix(n, ".html") }
	slices.SortStableFunc(out, func(a, b string) int {
		ja, jb := isReport(a), isReport(b)
		switch {
		case ja == jb:
			return 0
		case jb:
			return -1
		}
		return 1
	})
	return out
}

// Commit publishes the set: the previous run's files go, this run's
// arrive, reports last. It is not interruptible by a context: it takes
// as long as a few renames.
func (s *Set) Commit() error {
	if s.committed || s.closed {
		return errors.New("outset: Commit after Commit or Close")
	}
	prev, _ := readIndex(s.dir)
	all := slices.Clone(prev.Files)
	for _, n := range s.names {
		if !slices.Contains(all, n) {
			all = append(all, n)
		}
	}
	if err := s.writeIndex(index{Complete: false, Files: all}); err != nil {
		return err
	}
	// Remove every file of the previous run, those this run replaces
	// included: from here on the folder holds part of this run's set and
	// nothing of the last one, and this run's reports come last.
	for _, n := range prev.Files {
		p := s.Final(n)
		if fi, err := os.Lstat(p); err == nil && fi.Mode().IsRegular() {
			if err := os.Remove(p); err != nil {
				return &IOError{"removing the previous run's", p, err}
			}
		}
	}
	for _, n := range s.publishOrder() {
		dst := s.Final(n)
		if err := os.MkdirAll(filepath.Dir(dst), 0o755); err != nil {
			return &IOError{"publishing", dst, err}
		}
		if err := os.Rename(filepath.Join(s.stage, filepath.FromSlash(n)), dst); err != nil {
			return &IOError{"publishing", dst, err}
		}
	}
	if err := s.writeIndex(index{Complete: true, Files: s.names}); err != nil {
		return err
	}
	if err := syncPath(s.dir); err != nil {
		return &IOError{"publishing into", s.dir, err}
	}
	s.committed = true
	return s.Close()
}

// Close removes the staging folder (and with it everything not
// published) and releases the folder's lock. It is safe to call more than
// once, and after Commit.
func (s *Set) Close() error {
	if s.closed {
		return nil
	}
	s.closed = true
	var err error
	if s.stage != "" {
		if e := os.RemoveAll(s.stage); e != nil {
			err = &IOError{"removing staging folder", s.stage, e}
		}
	}
	if s.made && !s.committed {
		os.Remove(s.dir) // only if empty: nothing else can be in it
	}
	if s.lock != nil {
		s.lock.Close() // closing the descriptor releases the flock
	}
	return err
}
