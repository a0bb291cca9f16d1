package model

import (
	"context"
	"errors"
	"fmt"
	"math/rand/v2"
	"runtime"
	"sync"

	"spinpop/internal/workerpanic"
)

// ChunkStream returns the random stream of chunk i of a run with the given
// seed. Every random number a chunk uses comes from here, so a chunk's stars
// depend only on (seed, chunk index): never on which worker made them or on
// how many workers there were.
func ChunkStream(seed uint64, chunk int) *rand.Rand {
	// splitmix64 decorrelates neighbouring seeds and chunk indices before
	// they seed PCG (O'Neill 2014); PCG is fast and has 128 bits of state.
	a := splitmix64(seed ^ 0x9e3779b97f4a7c15)
	b := splitmix64(a ^ uint64(chunk)*0xbf58476d1ce4e5b9)
	return rand.New(rand.NewPCG(a, b))
}

func splitmix64(x uint64) uint64 {
	x += 0x9e3779b97f4a7c15
	x = (x ^ (x >> 30)) * 0xbf58476d1ce4e5b9
	x = (x ^ (x >> 27)) * 0x94d049bb133111eb
	return x ^ (x >> 31)
}

// FillFunc fills chunk c (c.Index and c.N already set) from stream r.
type FillFunc func(c *Chunk, r *rand.Rand)

// RunChunks makes nStars stars in chunks of chunkStars with a pool of
// workers, and hands the chunks to visit one at a time, in chunk order, on
// the calling goroutine. Memory is bounded by the number of chunks in
// flight (two per worker), not by nStars. visit must not keep the chunk: it
// is reused once visit returns.
func RunChunks(ctx context.Context, seed uint64, nStars int64, chunkStars, workers int, fill FillFunc, visit func(*Chunk) error) error {
	if nStars < 0 || chunkStars <= 0 {
		return errors.New("model: star count must be ≥ 0 and chunk size > 0")
	}
	return RunChunkRange(ctx, seed, nStars, chunkStars, ChunkRange{0, NumChunks(nStars, chunkStars)}, workers, fill, visit)
}

// RunChunkRange is RunChunks for the chunks [r.First, r.Last) of the run
// of nStars stars only: one part of a run split across machines. Each
// chunk is the same as in the whole run (its stream depends only on seed
// and index; its size on nStars and chunkStars), so the parts' results,
// merged in chunk order, are the whole run's.
func RunChunkRange(ctx context.Context, seed uint64, nStars int64, chunkStars int, r ChunkRange, workers int, fill FillFunc, visit func(*Chunk) error) error {
	if nStars < 0 || chunkStars <= 0 {
		return errors.New("model: star count must be ≥ 0 and chunk size > 0")
	}
	if n := NumChunks(nStars, chunkStars); r.First < 0 || r.Last < r.First || r.Last > n {
		return fmt.Errorf("model: chunk range [%d, %d) is not within the run's %d chunks", r.First, r.Last, n)
	}
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	nChunks := r.Last - r.First
	if nChunks == 0 {
		return nil
	}
	window := 2 * workers
	free := make(chan *Chunk, window)
	for range window {
		free <- NewChunk(chunkStars)
	}
	// ready is a ring of window slots: index i is handed to slot i%window.
	// Only window chunks exist, and a worker takes one before it takes an
	// index, so indices in flight (handed out, not yet visited) lie in
	// [v, v+window) for the visitor's next index v: no two share a slot,
	// and index i+window is handed out only after index i's chunk was
	// visited and freed, so its slot is empty again. Memory is flat in the
	// number of chunks (one channel per chunk took 2 GB up front at 10¹²
	// stars).
	ready := make([]chan *Chunk, window)
	for i := range ready {
		ready[i] = make(chan *Chunk, 1)
	}
	ctx, cancel := context.WithCancel(ctx)
	defer cancel()
	panics := workerpanic.New(cancel)

	next := make(chan int)
	var wg sync.WaitGroup
	for range workers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			defer panics.Catch()
			for {
				// Take a free chunk before taking an index: then every index
				// handed out already has memory to fill, and the in-order
				// visitor can never wait on an index starved of chunks.
				var c *Chunk
				select {
				case c = <-free:
				case <-ctx.Done():
					return
				}
				i, ok := <-next
				if !ok {
					return
				}
				ci := r.First + i
				n := chunkStars
				if rem := nStars - int64(ci)*int64(chunkStars); rem < int64(n) {
					n = int(rem)
				}
				c.grow(n)
				c.Index = ci
				fill(c, ChunkStream(seed, ci))
				first := int64(ci) * int64(chunkStars)
				for k := range c.N {
					c.StarID[k] = float64(first + int64(k) + 1)
				}
				ready[i%window] <- c
			}
		}()
	}
	go func() {
		defer close(next)
		for i := range nChunks {
			select {
			case next <- i:
			case <-ctx.Done():
				return
			}
		}
	}()

	var err error
	for i := range nChunks {
		var c *Chunk
		select {
		case c = <-ready[i%window]:
		case <-ctx.Done():
			err = ctx.Err()
		}
		if err != nil {
			break
		}
		if err = visit(c); err != nil {
			break
		}
		free <- c
	}
	cancel()
	// Drain so workers blocked on a full ready slot or free list can exit.
	go func() {
		for range free {
		}
	}()
	wg.Wait()
	close(free)
	panics.Repanic()
	return err
}
