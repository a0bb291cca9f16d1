// Package workerpanic carries a panic from a worker goroutine to the
// goroutine that waits for the workers. A panic on a goroutine of its own
// kills the process before any recover up the caller's stack can see it
// (with exit status 2, the status of bad input); carried over, it reaches
// the command's top-level recover, which reports it as the internal error
// it is.
package workerpanic

import (
	"fmt"
	"runtime/debug"
	"sync"
)

// Panic is a worker's panic value with the worker's stack.
type Panic struct {
	Value any
	Stack []byte
}

func (p *Panic) Error() string { return fmt.Sprintf("panic in a worker: %v", p.Value) }

// String shows the value and where the worker was.
func (p *Panic) String() string { return fmt.Sprintf("%v\n\nworker goroutine:\n%s", p.Value, p.Stack) }

// Slot holds the first panic of a pool's workers.
type Slot struct {
	mu     sync.Mutex
	p      *Panic
	cancel func()
}

// New returns a slot; cancel, if set, is called on the first panic so the
// other workers and the waiting goroutine stop instead of waiting for work
// that will never come.
func New(cancel func()) *Slot { return &Slot{cancel: cancel} }

// Catch must be deferred directly by the worker (defer s.Catch()).
func (s *Slot) Catch() {
	v := recover()
	if v == nil {
		return
	}
	s.mu.Lock()
	first := s.p == nil
	if first {
		s.p = &Panic{Value: v, Stack: debug.Stack()}
	}
	s.mu.Unlock()
	if first && s.cancel != nil {
		s.cancel()
	}
}

// Repanic panics with the caught panic, if any, on the calling goroutine.
// Call it after the workers are done.
func (s *Slot) Repanic() {
	s.mu.Lock()
	p := s.p
	s.mu.Unlock()
	if p != nil {
		panic(p)
	}
}
