package main

import (
	"fmt"
	"math"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/montecarlo"
	"github.com/ramify-dev/ramify/montecarlo/crosscheck"
)

// negligible is the library's rule, shared with the cross-check.
var negligible = crosscheck.Negligible

// Walkers still out at the time cap (censored) ended nowhere yet: a value or
// a hitting probability estimated over all walkers is then only a bound, and
// the mean exit time of those that exited is the mean of τ given τ ≤ cap.
// This file holds the automatic time cap and the bounds that the walk and
// crosscheck commands report instead of biased numbers.

// Automatic time cap (--time-cap 0): capMeans mean exit times of the PDE
// plus capSDs standard deviations. For a lifetime law with an exponential
// tail P(τ > t) ≈ ε·e^{−λt} (ε the weight of the slowest mode), m ≥ ε/λ and
// sd ≥ sqrt(2ε)/λ, so the censored fraction at 50m + 10sd is at most
// max over ε of ε·e^{−50ε − 10·sqrt(2ε)}, about 1e−3, and far less for
// the usual ε near 1 (derived; no source). Beyond capRCTimes RC times of the
// network walkers cannot be followed in reasonable time (each RC time costs
// about the steps of one crossing), so the cap never exceeds that.
const (
	capMeans   = 50
	capSDs     = 10
	capRCTimes = 1000
)

// hopeless is the PDE survival probability at the largest cap above which a
// walk is refused: nearly every walker would be censored, and the run would
// cost the most and tell nothing.
const hopeless = 0.99

// autoTimeCap returns the time cap for --time-cap 0 and a note saying how it
// was chosen when that matters, from the PDE exit statistics x (nil when
// they are not available; why is in xerr). It returns an error when nearly
// every walker would still be out at the largest cap walkers can be
// followed to. A zero cap means the walker library's own default.
func autoTimeCap(net *graphpde.Network, x *graphpde.ExitStats, xerr error) (float64, string, error) {
	rc, err := montecarlo.RCTime(net)
	if err != nil || !(rc > 0) || math.IsInf(rc, 0) {
		return 0, "", nil // Run reports the error, or uses its default
	}
	limit := capRCTimes * rc
	if x == nil || !(x.Mean >= 0) || math.IsInf(x.Mean, 0) {
		why := "not available"
		if xerr != nil {
			why = xerr.Error()
		}
		return limit, fmt.Sprintf("time cap %.4g (%d RC times of the network): the PDE's mean exit time is %s", limit, capRCTimes, why), nil
	}
	want := capMeans * x.Mean
	if sd := x.SD; sd >= 0 && !math.IsInf(sd, 0) {
		want += capSDs * sd
	} else {
		want *= 2
	}
	if want <= limit {
		if want == 0 {
			return limit, "", nil // absorbed at once: any cap will do
		}
		return want, "", nil
	}
	if s, err := x.SurvivalAt(limit); err == nil && s > hopeless {
		return 0, "", fmt.Errorf("the mean exit time from the PDE is %.4g, and %.4g%% of the walkers would still be out at %.4g (%d RC times of the network), the longest they can be followed: there is nothing to estimate (give --time-cap to walk anyway)",
			x.Mean, 100*s, limit, capRCTimes)
	}
	return limit, fmt.Sprintf("the mean exit time from the PDE, %.4g, is beyond what walkers can follow: they are followed up to %.4g (%d RC times of the network) and those still out are censored", x.Mean, limit, capRCTimes), nil
}
