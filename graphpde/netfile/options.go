package netfile

import (
	"context"
	"sync"
)

// Options are the options of ReadFileOptions. A nil *Options means none.
type Options struct {
	// Context, when not nil, stops the reading once it is cancelled: the
	// reader looks at it between batches of stopEvery tables of a network
	// file, rows of an edge list or nodes and edges of an SWC or DOT file
	// (and before and after reading JSON and GeoJSON, which are decoded
	// whole), and then returns an *Error whose
	// Err is the context's error, so that errors.Is(err,
	// context.Canceled) holds.
	Context context.Context
	// Lines, when not nil, is filled with the line on which every node and
	// edge is defined (network files, edge lists, SWC and DOT files; JSON
	// and GeoJSON leave it empty).
	Lines *Lines

	direct *int // tests: counts the nodes and edges added by directNode and directEdge
}

// stopEvery is the number of tables or rows read between two looks at
// Options.Context: a look costs about as much as reading a few fields, so
// this keeps it far below 1% of the reading while a Ctrl-C still stops a
// reader of a million rows per second within a millisecond or so.
const stopEvery = 1024

// countDirect counts a node or edge added directly (for tests).
func (o *Options) countDirect() {
	if o != nil && o.direct != nil {
		*o.direct++
	}
}

// stopped returns the *Error for a cancelled context, or nil (also for nil
// options).
func (o *Options) stopped(file string) error {
	if o == nil || o.Context == nil {
		return nil
	}
	if err := o.Context.Err(); err != nil {
		return &Error{File: file, Msg: "reading stopped: " + err.Error(), Err: err}
	}
	return nil
}

// Lines holds the 1-based line on which each node and edge of a file read
// by ReadFileOptions is defined: the line of its id key in a network file,
// of its row in an edge list (a node that only edges name has none). Node
// and Edge give them. The maps hold the lines of an edge list; a network
// file's lines are recorded while it is read, four bytes per node and
// edge, and found through the network's own indices (the record keeps the
// network, not the file's text).
type Lines struct {
	Nodes map[string]int // node id → line (edge lists)
	Edges map[string]int // edge id → line (edge lists)

	mu   sync.Mutex
	find func(kind, id string) int // lines of a network file (nil: none)
}

// Node returns the line of node id, or 0 if it is not known.
func (l *Lines) Node(id string) int {
	if l == nil {
		return 0
	}
	if ln, ok := l.Nodes[id]; ok {
		return ln
	}
	return l.lookup("node", id)
}

// Edge returns the line of edge id, or 0 if it is not known.
func (l *Lines) Edge(id string) int {
	if l == nil {
		return 0
	}
	if ln, ok := l.Edges[id]; ok {
		return ln
	}
	return l.lookup("edge", id)
}

// lookup asks find for the line of a node or edge (safe for concurrent use).
func (l *Lines) lookup(kind, id string) int {
	l.mu.Lock()
	defer l.mu.Unlock()
	if l.find == nil {
		return 0
	}
	return l.find(kind, id)
}

// reset empties l for a new file.
func (l *Lines) reset() {
	l.mu.Lock()
	defer l.mu.Unlock()
	l.Nodes = make(map[string]int)
	l.Edges = make(map[string]int)
	l.find = nil
}
