package compare

import (
	"context"
	"sync"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// recordingObserver passes re-observations on to a BankObserver and
// records the values of each, in order; order, when not nil, is its
// SideOrder.
type recordingObserver struct {
	*BankObserver
	mu    sync.Mutex
	calls [][]float64
}

func (r *recordingObserver) Observe(ctx context.Context, values []float64) (*Templates, error) {
	r.mu.Lock()
	r.calls = append(r.calls, append([]float64(nil), values...))
	r.mu.Unlock()
	return r.BankObserver.Observe(ctx, values)
}

// ranked is recordingObserver with a SideOrder.
type ranked struct {
	*recordingObserver
	order []int
}

func (r ranked) SideOrder() []int { return r.order }

// The order in which an expansion's side points are made changes no
// number of a fit, and no count of re-observations: only which comes
// first (the color zero point, ranked 0, before the law's a, ranked 1).
func TestSideOrderChangesNoNumber(t *testing.T) {
	s := newJointSetup(t)
	m := s.burstModel(t)
	nu := s.nuisance()
	like, _, _ := s.asimovLikelihood(t, m, nu, []float64{0.80, 0.015})
	fit := func(src Observer) FitResult {
		n := s.nuisance()
		n.Source = src
		r, err := FitJoint(context.Background(), like, m, n, FitOptions{Seed: 1, MaxRounds: 2})
		require.NoError(t, err)
		return r
	}
	plain := &recordingObserver{BankObserver: s.obs}
	a := fit(plain)
	inOrder := &recordingObserver{BankObserver: s.obs}
	b := fit(ranked{recordingObserver: inOrder, order: []int{1, 0}})
	assert.Equal(t, a.LogL, b.LogL)
	assert.Equal(t, a.Theta, b.Theta)
	assert.Equal(t, a.Nuisance, b.Nuisance)
	assert.Equal(t, len(plain.calls), len(inOrder.calls), "the same re-observations")
	// The first expansion: the centre, then its side points.
	require.GreaterOrEqual(t, len(plain.calls), 5)
	centre := nu.Nominal()
	moved := func(v []float64) int {
		for j := range v {
			if v[j] != centre[j] {
				return j
			}
		}
		return -1
	}
	assert.Equal(t, []int{-1, 0, 0, 1, 1}, []int{moved(plain.calls[0]), moved(plain.calls[1]), moved(plain.calls[2]), moved(plain.calls[3]), moved(plain.calls[4])}, "parameter order")
	assert.Equal(t, []int{-1, 1, 1, 0, 0}, []int{moved(inOrder.calls[0]), moved(inOrder.calls[1]), moved(inOrder.calls[2]), moved(inOrder.calls[3]), moved(inOrder.calls[4])}, "ranked order")
}
