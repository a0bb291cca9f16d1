package workerpanic

import (
	"context"
	"sync"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

func TestPanicReachesTheWaiter(t *testing.T) {
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	s := New(cancel)
	var wg sync.WaitGroup
	for i := range 4 {
		wg.Add(1)
		go func() {
			defer wg.Done()
			defer s.Catch()
			if i == 2 {
				var m map[string]int
				m["x"] = 1 // a real runtime panic: assignment to a nil map
			}
			<-ctx.Done() // the others wait until the panic cancels them
		}()
	}
	wg.Wait()
	var got any
	func() {
		defer func() { got = recover() }()
		s.Repanic()
	}()
	require.IsType(t, &Panic{}, got)
	p := got.(*Panic)
	assert.Contains(t, p.Error(), "nil map")
	assert.Contains(t, string(p.Stack), "workerpanic_test.go")
}

func TestNoPanicNoRepanic(t *testing.T) {
	s := New(nil)
	func() { defer s.Catch() }()
	assert.NotPanics(t, s.Repanic)
}
