// Package registry is the one way the project's extension points (spin-down
// laws, kinds of history part) keep what registers itself: entries in
// registration order, looked up by name, safe for concurrent use.
package registry

import (
	"fmt"
	"slices"
	"sync"
)

// List holds entries of type T, each named by the function given to New.
type List[T any] struct {
	mu      sync.RWMutex
	name    func(T) string
	entries []T
}

// New makes an empty list whose entries are named by name.
func New[T any](name func(T) string) *List[T] { return &List[T]{name: name} }

// Add appends e after check (which sees the entries already there) has
// accepted it; a name registered already is refused.
func (l *List[T]) Add(e T, check func(existing []T) error) error {
	l.mu.Lock()
	defer l.mu.Unlock()
	n := l.name(e)
	if n == "" {
		return fmt.Errorf("an entry needs a name")
	}
	for _, x := range l.entries {
		if l.name(x) == n {
			return fmt.Errorf("%q is registered already", n)
		}
	}
	if check != nil {
		if err := check(l.entries); err != nil {
			return err
		}
	}
	l.entries = append(l.entries, e)
	return nil
}

// All returns the entries in registration order.
func (l *List[T]) All() []T {
	l.mu.RLock()
	defer l.mu.RUnlock()
	return slices.Clone(l.entries)
}

// Lookup returns the entry named n.
func (l *List[T]) Lookup(n string) (T, bool) {
	l.mu.RLock()
	defer l.mu.RUnlock()
	for _, x := range l.entries {
		if l.name(x) == n {
			return x, true
		}
	}
	var zero T
	return zero, false
}

// Names lists the entries' names in registration order.
func (l *List[T]) Names() []string {
	var out []string
	for _, x := range l.All() {
		out = append(out, l.name(x))
	}
	return out
}
