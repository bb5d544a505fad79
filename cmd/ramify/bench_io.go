package main

import (
	"bufio"
	"context"
	"encoding/csv"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"runtime/metrics"
	"strconv"
	"sync"
	"time"

	"github.com/BurntSushi/toml"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/graphpde/gen"
	"github.com/ramify-dev/ramify/graphpde/netfile"
)

// writeNetFile writes net to path with write (a netfile writer).
func writeNetFile(path string, net *graphpde.Network, write func(io.Writer, *graphpde.Network) error) error {
	f, err := os.Create(path)
	if err != nil {
		return err
	}
	bw := bufio.NewWriterSize(f, 1<<16)
	if err := write(bw, net); err != nil {
		f.Close()
		return err
	}
	if err := bw.Flush(); err != nil {
		f.Close()
		return err
	}
	return f.Close()
}

// timing is the least wall-clock time and the least process CPU time
// (all threads, so the collector's work counts) of repeated runs.
type timing struct{ wall, cpu float64 }

// bestOf runs each of fs in turn, rounds times, and returns the least time
// of each (alternating, so that a burst of load from another process falls
// on both sides of a ratio alike).
func bestOf(ctx context.Context, rounds int, fs ...func() error) ([]timing, error) {
	best := make([]timing, len(fs))
	for i := range best {
		best[i] = timing{math.Inf(1), math.Inf(1)}
	}
	for range rounds {
		for i, f := range fs {
			if ctx.Err() != nil {
				return nil, fmt.Errorf("%w during the input and output measurements", errInterruptedAny)
			}
			c0, cpuOK := processCPU()
			t0 := time.Now()
			if err := f(); err != nil {
				return nil, err
			}
			best[i].wall = min(best[i].wall, time.Since(t0).Seconds())
			if c1, _ := processCPU(); cpuOK {
				best[i].cpu = min(best[i].cpu, (c1 - c0).Seconds())
			} else {
				best[i].cpu = math.NaN()
			}
		}
	}
	return best, nil
}

// cpuRatio describes the ratio of two CPU times, or nothing where the
// process's CPU time is not known.
func cpuRatio(a, b timing) string {
	if math.IsNaN(a.cpu) || math.IsNaN(b.cpu) || b.cpu <= 0 {
		return ""
	}
	return fmt.Sprintf("; CPU %.3g s = %.2f ×", a.cpu, a.cpu/b.cpu)
}

// heapPeak runs f while sampling the bytes of live and not yet swept heap
// objects every half millisecond, and returns their peak above what was
// in use before f (after a collection).
func heapPeak(f func() error) (float64, error) {
	runtime.GC()
	s := []metrics.Sample{{Name: "/memory/classes/heap/objects:bytes"}}
	metrics.Read(s)
	base := s[0].Value.Uint64()
	peak := base
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
				peak = max(peak, s[0].Value.Uint64())
			}
		}
	}()
	err := f()
	close(done)
	wg.Wait()
	metrics.Read(s)
	peak = max(peak, s[0].Value.Uint64())
	return float64(peak - base), err
}

// liveBytes returns the heap in use after a collection.
func liveBytes() float64 {
	runtime.GC()
	s := []metrics.Sample{{Name: "/memory/classes/heap/objects:bytes"}}
	metrics.Read(s)
	return float64(s[0].Value.Uint64())
}

// benchIO measures input and output on the square mesh (100×100 small,
// 300×300 large, whose network file is about 20 MB): reading the network
// file against a bare decode of it by the TOML library, with the heap it
// needs; reading its edge list against a plain encoding/csv pass; the
// whole `solve --json` against the solve alone; and the streamed JSON and
// --field writers against encoding/json's indenting encoder and
// encoding/csv's writer. Every ratio is of two best-of-3 times measured
// alternately in this run.
func benchIO(ctx context.Context, w io.Writer, size string) error {
	n := 100
	if size == "large" {
		n = 300
	}
	dir, err := os.MkdirTemp("", "ramify-bench-")
	if err != nil {
		return err
	}
	defer os.RemoveAll(dir)
	mesh := gen.SquareMesh(n, n)
	tomlFile, csvFile := filepath.Join(dir, "mesh.toml"), filepath.Join(dir, "mesh.csv")
	if err := writeNetFile(tomlFile, mesh, netfile.Write); err != nil {
		return err
	}
	if err := writeNetFile(csvFile, mesh, netfile.WriteCSV); err != nil {
		return err
	}
	mb := func(path string) float64 {
		st, err := os.Stat(path)
		if err != nil {
			return math.NaN()
		}
		return float64(st.Size()) / 1e6
	}
	tomlMB, csvMB := mb(tomlFile), mb(csvFile)
	fmt.Fprintf(w, "\ninput and output, %d×%d square mesh (%d nodes, %d edges; best of 3, alternating):\n", n, n, len(mesh.Nodes), len(mesh.Edges))

	// The network file against the TOML library alone.
	var net *graphpde.Network
	t, err := bestOf(ctx, 3, func() error {
		var err error
		net, err = netfile.ReadFile(tomlFile)
		return err
	}, func() error {
		data, err := os.ReadFile(tomlFile)
		if err != nil {
			return err
		}
		var root map[string]any
		_, err = toml.Decode(string(data), &root)
		return err
	})
	if err != nil {
		return err
	}
	net = nil
	peak, err := heapPeak(func() error {
		var err error
		net, err = netfile.ReadFile(tomlFile)
		return err
	})
	if err != nil {
		return err
	}
	before := liveBytes()
	runtime.KeepAlive(net)
	net = nil
	netBytes := before - liveBytes()
	fmt.Fprintf(w, "  network file, %.1f MB: read in %.3g s (%.0f MB/s; target ≤ 0.5 s for 20 MB%s), %.2f × a bare decode by the TOML library (%.3g s)%s\n",
		tomlMB, t[0].wall, tomlMB/t[0].wall, unmet(min(t[0].wall, t[0].cpu)/tomlMB*20 > 0.5), t[0].wall/t[1].wall, t[1].wall, cpuRatio(t[0], t[1]))
	fmt.Fprintf(w, "    heap while reading: peak %.0f MB = %.1f × the file (target ≤ 3%s); the network read holds %.0f MB = %.1f × the file\n",
		peak/1e6, peak/1e6/tomlMB, unmet(peak/1e6/tomlMB > 3), netBytes/1e6, netBytes/1e6/tomlMB)

	// The edge list against a plain encoding/csv pass.
	t, err = bestOf(ctx, 3, func() error {
		_, err := netfile.ReadFile(csvFile)
		return err
	}, func() error {
		return plainCSVPass(csvFile)
	})
	if err != nil {
		return err
	}
	fmt.Fprintf(w, "  edge list (CSV), %.1f MB: read in %.3g s (%.0f MB/s), %.2f × a plain encoding/csv pass (%.3g s; target ≤ 2%s)%s\n",
		csvMB, t[0].wall, csvMB/t[0].wall, t[0].wall/t[1].wall, t[1].wall, unmet(t[0].wall/t[1].wall > 2), cpuRatio(t[0], t[1]))

	// The whole solve --json against the solve alone.
	net, err = netfile.ReadFile(tomlFile)
	if err != nil {
		return err
	}
	var sol *graphpde.Solution
	var jsonBytes countWriter
	t, err = bestOf(ctx, 3, func() error {
		jsonBytes = 0
		if code := run(ctx, []string{"solve", tomlFile, "--json"}, &jsonBytes, io.Discard); code != 0 {
			return fmt.Errorf("solve --json on the mesh: exit %d", code)
		}
		return nil
	}, func() error {
		var err error
		sol, _, err = solveField(ctx, net, graphpde.MethodAuto, 0)
		return err
	})
	if err != nil {
		return err
	}
	fmt.Fprintf(w, "  solve --json, whole command (read, solve, summary, %.0f MB of JSON): %.3g s = %.2f × the solve alone (%.3g s; target ≤ 2%s)%s\n",
		float64(jsonBytes)/1e6, t[0].wall, t[0].wall/t[1].wall, t[1].wall, unmet(t[0].wall/t[1].wall > 2), cpuRatio(t[0], t[1]))

	// The writers against the standard library's (the field of the first
	// 20 000 edges: sampling it costs more than writing it).
	out := solveJSON(net, sol, nil, nil)
	fieldEdges := min(len(sol.Net.Edges), 20000)
	var rows int
	var fieldBytes countWriter
	t, err = bestOf(ctx, 3, func() error {
		return writeSolveJSON(io.Discard, out)
	}, func() error {
		return writeJSON(io.Discard, out)
	}, func() error {
		rows, fieldBytes = 0, 0
		bw := bufio.NewWriterSize(&fieldBytes, 1<<16)
		if err := fieldRows(bw, sol, 0, &rows, fieldEdges); err != nil {
			return err
		}
		return bw.Flush()
	}, func() error {
		bw := bufio.NewWriterSize(io.Discard, 1<<16)
		cw := csv.NewWriter(bw)
		cw.Write([]string{"edge", "x", "u"})
		var pts []graphpde.FieldPoint
		for e := range fieldEdges {
			pts = sol.Sample(pts[:0], e)
			for _, p := range pts {
				cw.Write([]string{sol.Net.Edges[e].ID, strconv.FormatFloat(p.X, 'g', 10, 64), strconv.FormatFloat(p.U, 'g', 12, 64)})
			}
		}
		cw.Flush()
		if err := cw.Error(); err != nil {
			return err
		}
		return bw.Flush()
	})
	if err != nil {
		return err
	}
	fmt.Fprintf(w, "  solve JSON streamed: %.3g s = %.2f × encoding/json's indenting encoder (%.3g s)\n", t[0].wall, t[0].wall/t[1].wall, t[1].wall)
	fmt.Fprintf(w, "  --field CSV streamed, %d edges, %d rows, %.0f MB: %.3g s = %.2f × encoding/csv's writer (%.3g s; both sample the field, most of the cost)\n",
		fieldEdges, rows, float64(fieldBytes)/1e6, t[2].wall, t[2].wall/t[3].wall, t[3].wall)
	return nil
}

// plainCSVPass reads path with encoding/csv (records reused, comments
// skipped, leading spaces trimmed, as the edge-list reader sets it) and
// parses the length column: the reference for reading an edge list.
func plainCSVPass(path string) error {
	f, err := os.Open(path)
	if err != nil {
		return err
	}
	defer f.Close()
	cr := csv.NewReader(f)
	cr.ReuseRecord, cr.Comment, cr.TrimLeadingSpace = true, '#', true
	head, err := cr.Read()
	if err != nil {
		return err
	}
	col := -1
	for i, h := range head {
		if h == "length" {
			col = i
		}
	}
	var sum float64
	for {
		rec, err := cr.Read()
		if err == io.EOF {
			break
		}
		if err != nil {
			return err
		}
		if col >= 0 && rec[col] != "" {
			v, _ := strconv.ParseFloat(rec[col], 64)
			sum += v
		}
	}
	if math.IsNaN(sum) {
		return fmt.Errorf("NaN length")
	}
	return nil
}

// countWriter counts the bytes written to it.
type countWriter int64

func (c *countWriter) Write(p []byte) (int, error) {
	*c += countWriter(len(p))
	return len(p), nil
}
