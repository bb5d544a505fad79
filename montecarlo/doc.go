// Package montecarlo estimates the solution of the linear network problems
// of package graphpde by following random walkers (DESIGN.md §4).
package montecarlo
