package graphpde

import "hash/maphash"

// idIndex finds a node or an edge by its id. It is an open-addressing hash
// table with linear probing whose slots hold, in 8 bytes, the top 32 bits
// of the id's hash and the element's index plus one (0: empty); the ids
// themselves are not stored again but compared with the network's own
// Nodes[i].ID or Edges[i].ID. A Go map[string]int holds the id's string
// header and an int per entry, at a load of at most 7/8 and often half
// after a split (40–50 bytes per id measured on the 300×300 mesh: 20 MB for
// its 269 400 ids); this table holds 8 bytes a slot at a load of at most
// 3/4 (11–21 bytes per id). The slot's position is taken from the top bits
// of the hash, so growing the table needs no id again.
type idIndex struct {
	slots []uint64 // hash top 32 bits << 32 | index+1; 0 empty; len a power of two (or 0)
	n     int      // ids held
}

// idSeed seeds the hash of every index (one per process: an index is
// rebuilt, never compared across processes).
var idSeed = maphash.MakeSeed()

// idHash returns the top 32 bits of the hash of id (never 0, so that a
// slot is never mistaken for an empty one by its hash part alone).
func idHash(id string) uint32 {
	h := uint32(maphash.String(idSeed, id) >> 32)
	if h == 0 {
		h = 1
	}
	return h
}

// shift returns the shift that turns a 32-bit hash into a slot position.
func (x *idIndex) shift() uint {
	s := uint(32)
	for n := len(x.slots); n > 1; n >>= 1 {
		s--
	}
	return s
}

// find returns the index of id among elems, whose ids idOf gives (a slot
// naming an element beyond elems is skipped, as in a copy of the network
// that shares its index with a network that has grown since).
func find[T any](x *idIndex, elems []T, idOf func(*T) string, id string) (int, bool) {
	if len(x.slots) == 0 {
		return 0, false
	}
	h := idHash(id)
	mask := len(x.slots) - 1
	for p := int(h >> x.shift()); ; p = (p + 1) & mask {
		s := x.slots[p]
		if s == 0 {
			return 0, false
		}
		if uint32(s>>32) == h {
			if i := int(uint32(s)) - 1; i < len(elems) && idOf(&elems[i]) == id {
				return i, true
			}
		}
	}
}

// reserve makes room for size ids in all.
func (x *idIndex) reserve(size int) {
	want := 8
	for want*3 < size*4 { // load ≤ 3/4
		want *= 2
	}
	if want <= len(x.slots) {
		return
	}
	old := x.slots
	x.slots = make([]uint64, want)
	sh, mask := x.shift(), want-1
	for _, s := range old {
		if s == 0 {
			continue
		}
		p := int(uint32(s>>32) >> sh)
		for x.slots[p] != 0 {
			p = (p + 1) & mask
		}
		x.slots[p] = s
	}
}

// add records that id (not in the index) is at index i.
func (x *idIndex) add(id string, i int) {
	if (x.n+1)*4 > len(x.slots)*3 {
		x.reserve(max(x.n+1, 2*x.n))
	}
	h := idHash(id)
	mask := len(x.slots) - 1
	p := int(h >> x.shift())
	for x.slots[p] != 0 {
		p = (p + 1) & mask
	}
	x.slots[p] = uint64(h)<<32 | uint64(uint32(i+1))
	x.n++
}

func nodeID(nd *Node) string { return nd.ID }
func edgeID(e *Edge) string  { return e.ID }
