package netfile

import (
	"bytes"
	"fmt"
	"runtime"
	"runtime/metrics"
	"sync"
	"testing"
	"time"

	"github.com/ramify-dev/ramify/graphpde/gen"
)

// heapPeakOf runs f while sampling the bytes of live and not yet swept
// heap objects every half millisecond and returns their peak above what
// was in use before f (after a collection), and what is still in use
// after f and a collection (what f's result holds).
func heapPeakOf(f func()) (peak, kept float64) {
	s := []metrics.Sample{{Name: "/memory/classes/heap/objects:bytes"}}
	live := func() uint64 {
		runtime.GC()
		metrics.Read(s)
		return s[0].Value.Uint64()
	}
	base := live()
	top := base
	done := make(chan struct{})
	var wg sync.WaitGroup
	wg.Add(1)
	go func() {
		defer wg.Done()
		tk := time.NewTicker(500 * time.Microsecond)
		defer tk.Stop()
		for {
			select {
			case <-done:
				return
			case <-tk.C:
				metrics.Read(s)
				top = max(top, s[0].Value.Uint64())
			}
		}
	}()
	f()
	close(done)
	wg.Wait()
	metrics.Read(s)
	top = max(top, s[0].Value.Uint64())
	return float64(top - base), float64(live()) - float64(base)
}

// BenchmarkReadMeshHeap reports the heap that reading the n×n mesh's
// network file needs at its peak and what the network read holds, both
// as multiples of the file's size (peak-x, net-x; the goal is a peak of
// at most 3 × the file). The text is read from memory, so it is counted
// in neither: the peak adds one file's size for it.
func BenchmarkReadMeshHeap(b *testing.B) {
	for _, n := range []int{100, 300} {
		var buf bytes.Buffer
		if err := Write(&buf, gen.SquareMesh(n, n)); err != nil {
			b.Fatal(err)
		}
		data := buf.Bytes()
		b.Run(fmt.Sprintf("n=%d", n), func(b *testing.B) {
			var peak, kept float64
			for b.Loop() {
				var keep any
				p, k := heapPeakOf(func() {
					net, err := Read(bytes.NewReader(data), "mesh.toml")
					if err != nil {
						b.Fatal(err)
					}
					keep = net
				})
				runtime.KeepAlive(keep)
				peak, kept = max(peak, p), k
			}
			size := float64(len(data))
			b.ReportMetric(peak/size, "peak-x")
			b.ReportMetric(kept/size, "net-x")
			b.ReportMetric(size/1e6, "file-MB")
		})
	}
}
