package sim

import (
	"sync"
	"testing"

	"teeter/models"
)

// Studies and the window build plants on several goroutines at once; under
// `go test -race` (make test runs it) this fails if building shares state
// without a guard.
func TestPlantsBuildAndRunConcurrently(t *testing.T) {
	r, err := models.Load("builtin:pendulum")
	if err != nil {
		t.Fatal(err)
	}
	var wg sync.WaitGroup
	errs := make([]error, 4)
	for i := range errs {
		wg.Add(1)
		go func() {
			defer wg.Done()
			p, err := New(r.Clone(), NewHoldPose(), Options{Seed: uint64(i)})
			if err == nil {
				err = p.RunFor(0.05)
			}
			errs[i] = err
		}()
	}
	wg.Wait()
	for i, err := range errs {
		if err != nil {
			t.Errorf("plant %d: %v", i, err)
		}
	}
}
