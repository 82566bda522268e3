package shot

import (
	"context"
	"sync"
)

// RunOrdered runs do(0) .. do(n-1) on a bounded pool of workers and hands each result
// to emit in index order, on the caller's goroutine. At most 2 x workers results are
// in flight or waiting for an earlier one, so memory is bounded by the workers, not by
// n. A cancelled context starts no new work; what was done is still emitted. It
// reports whether it stopped before the end.
//
// This is the batch's only concurrency: each evaluation is sequential.
func RunOrdered[T any](ctx context.Context, n, workers int, do func(i int) T, emit func(i int, v T)) (interrupted bool) {
	workers = max(workers, 1)
	type done struct {
		i int
		v T
	}
	work := make(chan int)
	results := make(chan done, workers)
	window := make(chan struct{}, 2*workers)
	var wg sync.WaitGroup
	for range workers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range work {
				results <- done{i, do(i)}
			}
		}()
	}
	go func() {
		defer close(work)
		for i := range n {
			select {
			case window <- struct{}{}:
			case <-ctx.Done():
				return
			}
			select {
			case work <- i:
			case <-ctx.Done():
				return
			}
		}
	}()
	go func() {
		wg.Wait()
		close(results)
	}()
	pending := map[int]T{}
	next := 0
	for d := range results {
		pending[d.i] = d.v
		for v, ok := pending[next]; ok; v, ok = pending[next] {
			delete(pending, next)
			emit(next, v)
			next++
			<-window
		}
	}
	return next < n
}
