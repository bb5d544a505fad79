package netfile

import (
	"bytes"
	"encoding/csv"
	"fmt"
	"io"
	"strconv"
	"testing"

	"github.com/BurntSushi/toml"

	"github.com/ramify-dev/ramify/graphpde/gen"
)

// chainBytes is chainCSV(n) held in memory, for benchmarks.
func chainBytes(b *testing.B, n int) []byte {
	data, err := io.ReadAll(chainCSV(n))
	if err != nil {
		b.Fatal(err)
	}
	return data
}

// BenchmarkReadCSV reads chains of n edges. The reference, csv-only, is a
// bare encoding/csv pass over the same bytes (with ReuseRecord, parsing the
// length column), so the ratio is the cost of building the network.
func BenchmarkReadCSV(b *testing.B) {
	for _, n := range []int{1_000, 100_000, 1_000_000} {
		data := chainBytes(b, n)
		b.Run(fmt.Sprintf("netfile/rows=%d", n), func(b *testing.B) {
			b.ReportAllocs()
			b.SetBytes(int64(len(data)))
			for b.Loop() {
				if _, err := ReadCSV(bytes.NewReader(data), "chain.csv"); err != nil {
					b.Fatal(err)
				}
			}
		})
		b.Run(fmt.Sprintf("csv-only/rows=%d", n), func(b *testing.B) {
			b.ReportAllocs()
			b.SetBytes(int64(len(data)))
			for b.Loop() {
				cr := csv.NewReader(bytes.NewReader(data))
				cr.ReuseRecord = true
				cr.FieldsPerRecord = -1
				var sum float64
				for {
					rec, err := cr.Read()
					if err == io.EOF {
						break
					}
					if len(rec) > 4 {
						v, _ := strconv.ParseFloat(rec[4], 64)
						sum += v
					}
				}
				_ = sum
			}
		})
	}
}

// BenchmarkRead reads the same chains as network files (written by Write),
// to compare the two formats per edge.
func BenchmarkRead(b *testing.B) {
	for _, n := range []int{1_000, 100_000} {
		net, err := ReadCSV(bytes.NewReader(chainBytes(b, n)), "chain.csv")
		if err != nil {
			b.Fatal(err)
		}
		var buf bytes.Buffer
		if err := Write(&buf, net); err != nil {
			b.Fatal(err)
		}
		data := buf.Bytes()
		b.Run(fmt.Sprintf("edges=%d", n), func(b *testing.B) {
			b.ReportAllocs()
			b.SetBytes(int64(len(data)))
			for b.Loop() {
				if _, err := Read(bytes.NewReader(data), "chain.toml"); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// BenchmarkReadMesh reads a square wire mesh written by Write (the
// network file of a large input). The reference, toml-only, is the TOML
// library decoding the same bytes into maps and nothing else, so the
// ratio is what the reader adds to the library: the lexical pre-scan,
// the checks, the line bookkeeping and building the network.
func BenchmarkReadMesh(b *testing.B) {
	for _, n := range []int{100, 300} {
		var buf bytes.Buffer
		if err := Write(&buf, gen.SquareMesh(n, n)); err != nil {
			b.Fatal(err)
		}
		data := buf.Bytes()
		b.Run(fmt.Sprintf("netfile/n=%d", n), func(b *testing.B) {
			b.ReportAllocs()
			b.SetBytes(int64(len(data)))
			for b.Loop() {
				if _, err := Read(bytes.NewReader(data), "mesh.toml"); err != nil {
					b.Fatal(err)
				}
			}
		})
		b.Run(fmt.Sprintf("toml-only/n=%d", n), func(b *testing.B) {
			b.ReportAllocs()
			b.SetBytes(int64(len(data)))
			for b.Loop() {
				var root map[string]any
				if _, err := toml.Decode(string(data), &root); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// BenchmarkReadCSVMesh reads the n×n square mesh's edge list (written by
// WriteCSV: node rows, then edge rows). The reference, csv-only, is a plain
// encoding/csv pass set as the reader sets it (records reused, '#'
// comments, leading spaces trimmed) that parses the length column, as
// `ramify bench` measures it; the goal is a ratio of at most 2.
func BenchmarkReadCSVMesh(b *testing.B) {
	for _, n := range []int{100, 300} {
		var buf bytes.Buffer
		if err := WriteCSV(&buf, gen.SquareMesh(n, n)); err != nil {
			b.Fatal(err)
		}
		data := buf.Bytes()
		b.Run(fmt.Sprintf("netfile/n=%d", n), func(b *testing.B) {
			b.ReportAllocs()
			b.SetBytes(int64(len(data)))
			for b.Loop() {
				if _, err := ReadCSV(bytes.NewReader(data), "mesh.csv"); err != nil {
					b.Fatal(err)
				}
			}
		})
		b.Run(fmt.Sprintf("csv-only/n=%d", n), func(b *testing.B) {
			b.ReportAllocs()
			b.SetBytes(int64(len(data)))
			for b.Loop() {
				cr := csv.NewReader(bytes.NewReader(data))
				cr.ReuseRecord, cr.Comment, cr.TrimLeadingSpace = true, '#', true
				head, err := cr.Read()
				if err != nil {
					b.Fatal(err)
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
						b.Fatal(err)
					}
					if col >= 0 && rec[col] != "" {
						v, _ := strconv.ParseFloat(rec[col], 64)
						sum += v
					}
				}
				_ = sum
			}
		})
	}
}
