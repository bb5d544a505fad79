// Package crosscheck compares the answers of the two engines for one start
// point: what the PDE side computed (a PDE value: the value u(start), the
// hitting probabilities, the probability of being killed, the mean exit
// time, the survival function, the edge occupations) against a walker run
// (montecarlo.Result), and decides with package compare.
//
// It knows which quantities are comparable and how: the value on the scale
// of the payoffs; where walkers end as proportions of all finished walkers
// (counts recovered from the hit means), the mean exit time only when no
// walker was censored, the exit-time law by a (censored) Kolmogorov–Smirnov
// test against a tabulated survival function, the split frequencies at the
// junctions where the walker side reports that departures follow the
// weights exactly (montecarlo.Result.SplitExact) and that were left often
// enough to resolve the requested resolution, and optionally the node
// weights that best explain the departures. Everything else becomes a note.
//
// The package sits on the walker side: it reads the network through
// montecarlo.Network and the PDE's numbers as plain data, so it imports
// neither engine's solver; the command wires the engines and prints. The
// statistics are described in docs/walkers.md and docs/exit-statistics.md.
package crosscheck
