package netfile

import (
	"strconv"
	"strings"
)

// Size limits checked before anything proportional to the grid is allocated.
const (
	// MaxCellsPerEdge is the largest cells value accepted on one edge.
	MaxCellsPerEdge = 100_000_000
	// BytesPerCell is the memory assumed per grid cell (a lower estimate of
	// what a solver stores per cell: coefficients, fluxes, factors).
	BytesPerCell = 64
	// MemoryLimit is the largest total grid memory, in bytes, that a file may
	// ask for: the sum of cells over all edges times BytesPerCell.
	MemoryLimit = 16 << 30
)

// Error is the error returned for a network file or CSV edge list that cannot
// be read. Error() gives one line:
//
//	net.toml:23: edge "arm1": length = -1 must be a finite number > 0
//
// File is the name given to the reader (empty for Write), Line the 1-based
// line of the offending key, of the table header when a required key is
// missing, or 0 when unknown. Object names what is wrong as it is printed:
// `node "hub"`, `edge "arm1"`, `edge #3` (third edge, which has no usable id),
// "[defaults]", "[network]", or "" for the file as a whole. Err is the
// underlying cause when there is one: a toml.ParseError for syntax, an
// *os.PathError, a *csv.ParseError, or a *graphpde.ModelError for a value
// that the network model rejects.
type Error struct {
	File   string
	Line   int
	Object string
	Msg    string
	Err    error
}

func (e *Error) Error() string {
	var b strings.Builder
	switch {
	case e.File != "" && e.Line > 0:
		b.WriteString(e.File + ":" + strconv.Itoa(e.Line) + ": ")
	case e.File != "":
		b.WriteString(e.File + ": ")
	case e.Line > 0:
		b.WriteString("line " + strconv.Itoa(e.Line) + ": ")
	}
	if e.Object != "" {
		b.WriteString(e.Object + ": ")
	}
	msg := e.Msg
	if msg == "" && e.Err != nil {
		msg = e.Err.Error()
	}
	// Keep the error on one line whatever the cause says.
	b.WriteString(strings.ReplaceAll(msg, "\n", " "))
	return b.String()
}

// Unwrap returns the underlying cause, or nil.
func (e *Error) Unwrap() error { return e.Err }

// editDistance is the Levenshtein distance of a and b, for "did you mean".
func editDistance(a, b string) int {
	prev := make([]int, len(b)+1)
	cur := make([]int, len(b)+1)
	for j := range prev {
		prev[j] = j
	}
	for i := 1; i <= len(a); i++ {
		cur[0] = i
		for j := 1; j <= len(b); j++ {
			cost := 1
			if a[i-1] == b[j-1] {
				cost = 0
			}
			cur[j] = min(prev[j]+1, cur[j-1]+1, prev[j-1]+cost)
		}
		prev, cur = cur, prev
	}
	return prev[len(b)]
}

// unknownKey formats the message for an unknown key, suggesting the closest
// known key when it is near.
func unknownKey(key string, known []string) string {
	msg := "unknown key " + strconv.Quote(key)
	best, bestD := "", 3
	for _, k := range known {
		if d := editDistance(strings.ToLower(key), k); d < bestD {
			best, bestD = k, d
		}
	}
	if best != "" {
		msg += " (did you mean " + strconv.Quote(best) + "?)"
	}
	return msg
}
