package plots

import (
	"runtime"
	"sync"
	"sync/atomic"
)

// eachConcurrently calls f(0), …, f(n-1) on up to GOMAXPROCS goroutines,
// each taking the next index in turn, and returns when every call has.
// Figures are independent of one another, and drawing them is most of
// a large audit's time once the measures are done.
func eachConcurrently(n int, f func(i int)) {
	workers := min(runtime.GOMAXPROCS(0), n)
	if workers <= 1 {
		for i := 0; i < n; i++ {
			f(i)
		}
		return
	}
	var next atomic.Int64
	var wg sync.WaitGroup
	for w := 0; w < workers; w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := int(next.Add(1) - 1); i < n; i = int(next.Add(1) - 1) {
				f(i)
			}
		}()
	}
	wg.Wait()
}
