package main

import (
	"context"
	"fmt"
	"io"
	"strings"

	"github.com/ramify-dev/ramify/graphpde"
)

// solveField solves the steady problem of net: the linear solve, or Newton
// (graphpde.SolveNonlinear) when the network has laws that depend on u or
// fully nonlinear equations or node laws. nl is nil for a linear solve. A
// nonlinear solve that ends without converging returns an error that says
// why (never the unconverged field) together with its result.
func solveField(ctx context.Context, net *graphpde.Network, m graphpde.Method, cells int) (*graphpde.Solution, *graphpde.NonlinearResult, error) {
	var timeNote string
	if td := graphpde.TimeDependence(net); len(td) > 0 {
		timeNote = "time-dependent data (" + strings.Join(td, "; ") + ") taken at t = 0 in this steady solve; 'ramify evolve' follows them in time"
	}
	if graphpde.Controlled(net) {
		res, err := solveControlled(ctx, net, m, cells, 0)
		if err != nil {
			return nil, nil, err
		}
		return res.Solution, nil, nil
	}
	if !graphpde.HasLaws(net) {
		sol, err := interruptible(ctx, func() (*graphpde.Solution, error) {
			return graphpde.Solve(net, &graphpde.Settings{Method: m, Cells: cells, Context: ctx})
		})
		if sol != nil && timeNote != "" {
			sol.Notes = append(sol.Notes, timeNote)
		}
		return sol, nil, placed(net, err)
	}
	res, err := interruptible(ctx, func() (*graphpde.NonlinearResult, error) {
		return graphpde.SolveNonlinear(net, &graphpde.NonlinearSettings{Method: m, Cells: cells, Context: ctx})
	})
	if err != nil {
		return nil, res, placed(net, err)
	}
	if res.Status != graphpde.Converged {
		why := fmt.Sprintf("Newton did not converge (%v after %d iterations, scaled residual %.3g)", res.Status, res.Iterations, res.Residual)
		if res.Status == graphpde.Fold {
			why = fmt.Sprintf("no steady solution found (fold: Newton stopped after %d iterations, scaled residual %.3g)", res.Iterations, res.Residual)
		}
		for _, n := range res.Notes {
			why += "; " + n
		}
		return nil, res, fmt.Errorf("%s", why)
	}
	if timeNote != "" {
		res.Notes = append(res.Notes, timeNote)
	}
	return res.Solution, res, nil
}

// nonlinearOut is what a nonlinear solve adds to the JSON of a steady solve.
type nonlinearOut struct {
	Iterations *int  `json:"iterations,omitempty"`
	Residual   *num  `json:"residual,omitempty"`
	History    []num `json:"residual_history,omitempty"`
	Unique     *bool `json:"unique,omitempty"`
	// Notes are merged into the solve's own "notes" (one key: an embedded
	// field of the same name would be dropped by encoding/json).
	Notes []string `json:"-"`
}

func nonlinearJSON(nl *graphpde.NonlinearResult) nonlinearOut {
	if nl == nil {
		return nonlinearOut{}
	}
	it, r, u := nl.Iterations, num(nl.Residual), nl.Unique
	h := make([]num, len(nl.History))
	for i, x := range nl.History {
		h[i] = num(x)
	}
	return nonlinearOut{Iterations: &it, Residual: &r, History: h, Unique: &u, Notes: nl.Notes}
}

// printNonlinear adds the Newton summary to a human-readable solve.
func printNonlinear(w io.Writer, nl *graphpde.NonlinearResult) {
	if nl == nil {
		return
	}
	fmt.Fprintf(w, "nonlinear: Newton converged in %s, scaled residual %.2e\n", plural(nl.Iterations, "iteration"), nl.Residual)
	for _, n := range nl.Notes {
		fmt.Fprintln(w, "note:", n)
	}
}

// nonlinearRefusal returns the error of a command whose quantities have no
// meaning for a network with nonlinear laws, naming the file and what to
// use instead, or nil for a linear network.
func nonlinearRefusal(net *graphpde.Network, file, what string) error {
	if td := graphpde.TimeDependence(net); len(td) > 0 {
		return fmt.Errorf("%s has data that depend on t (%s): this command solves time-independent problems; 'ramify evolve' follows them in time", file, strings.Join(td, "; "))
	}
	if !graphpde.HasLaws(net) {
		return nil
	}
	return fmt.Errorf("%s has laws that depend on u (or nonlinear node laws): %s; 'ramify solve' gives the field and 'ramify crosscheck --from POINT' checks it with the walkers of the linear problem it solves", file, what)
}

// nonlinearCondition describes a node's nonlinear law for the node table:
// ", loss law: EXPR" or ", node law: EXPR" (empty for a linear node).
func nonlinearCondition(nl *graphpde.NodeNonlinear) string {
	switch {
	case nl == nil:
		return ""
	case nl.General != nil:
		return ", node law " + nl.Src
	}
	return ", loss " + nl.Src
}
