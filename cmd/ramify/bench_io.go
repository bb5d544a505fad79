package main

import (
	"bufio"
	"io"
	"os"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/graphpde/gen"
	"github.com/ramify-dev/ramify/graphpde/netfile"
)

// writeMeshFile writes the n×n square mesh to path as a network file
// (netfile.Write; 300×300 is about 20 MB).
func writeMeshFile(path string, n int) error {
	return writeNetFile(path, gen.SquareMesh(n, n), netfile.Write)
}

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
