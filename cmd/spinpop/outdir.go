package main

import (
	"fmt"
	"io"
	"os"
	"path/filepath"
)

// prepareOutDir makes sure dir exists and is empty, or that the user asked
// for --force. With --force we still only ever replace the files this run
// writes; nothing else in the folder is touched.
func prepareOutDir(dir string, force bool) error {
	if dir == "" {
		return usageErrorf("--out DIR is required: name a folder for the outputs")
	}
	entries, err := os.ReadDir(dir)
	switch {
	case os.IsNotExist(err):
		if err := os.MkdirAll(dir, 0o755); err != nil {
			return fmt.Errorf("creating output folder %s: %w", dir, err)
		}
		return nil
	case err != nil:
		return usageErrorf("output folder %s cannot be read: %v", dir, err)
	}
	if len(entries) > 0 && !force {
		return usageErrorf("output folder %s is not empty (%d entries); choose a new folder or pass --force to replace this tool's files in it", dir, len(entries))
	}
	return nil
}

// writeFileAtomic writes the output under a temporary name in the same
// folder and renames it into place, so a reader (or a crash) never sees a
// half-written file.
func writeFileAtomic(path string, write func(w io.Writer) error) (err error) {
	tmp, err := os.CreateTemp(filepath.Dir(path), "."+filepath.Base(path)+".partial-*")
	if err != nil {
		return fmt.Errorf("writing %s: %w", path, err)
	}
	defer func() {
		if err != nil {
			tmp.Close()
			os.Remove(tmp.Name())
		}
	}()
	if err = write(tmp); err != nil {
		return fmt.Errorf("writing %s: %w", path, err)
	}
	if err = tmp.Sync(); err != nil {
		return fmt.Errorf("writing %s: %w", path, err)
	}
	if err = tmp.Close(); err != nil {
		return fmt.Errorf("writing %s: %w", path, err)
	}
	// CreateTemp makes private files; outputs are ordinary shared files.
	if err = os.Chmod(tmp.Name(), 0o644); err != nil {
		return fmt.Errorf("writing %s: %w", path, err)
	}
	if err = os.Rename(tmp.Name(), path); err != nil {
		return fmt.Errorf("writing %s: %w", path, err)
	}
	return nil
}
