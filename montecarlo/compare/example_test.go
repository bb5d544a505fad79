package compare_test

import (
	"fmt"

	"github.com/ramify-dev/ramify/montecarlo/compare"
)

// A junction whose walkers do not follow the weights: the PDE says 2/3 of the
// walkers end at the far tip, 100000 walkers say 0.431.
func ExampleDecide() {
	checks := []compare.Check{
		compare.Proportion("hit:tip1", 2.0/3, 43100, 100000),
		compare.Proportion("hit:tip2", 1.0/3, 56900, 100000),
		compare.Mean("exit-time:mean", 0.500, 0.5012, 0.0011),
	}
	r := compare.Decide(checks, nil)
	fmt.Println(r.Verdict)
	fmt.Println(r.Explain)
	for _, c := range r.Checks {
		fmt.Printf("%-15s pde %.4f walker %.4f ± %.4f  z = %6.1f  pass %v\n", c.Quantity, c.PDE, c.Walker, c.StdErr, c.Z, c.Pass)
	}
	// Output:
	// disagree
	// walkers end at tip1 with probability 0.431 ± 0.002; the PDE gives 0.667; z = -150 (2 of 3 checks disagree at family-wise level 1%)
	// hit:tip1        pde 0.6667 walker 0.4310 ± 0.0016  z = -150.5  pass false
	// hit:tip2        pde 0.3333 walker 0.5690 ± 0.0016  z =  150.5  pass false
	// exit-time:mean  pde 0.5000 walker 0.5012 ± 0.0011  z =    1.1  pass true
}

// The same network with walkers that do follow the weights.
func ExampleDecide_agree() {
	checks := []compare.Check{
		compare.Proportion("hit:tip1", 2.0/3, 66580, 100000),
		compare.Proportion("hit:tip2", 1.0/3, 33420, 100000),
		compare.Mean("exit-time:mean", 0.500, 0.5012, 0.0011),
	}
	r := compare.Decide(checks, nil)
	fmt.Println(r.Verdict)
	fmt.Println(r.Explain)
	// Output:
	// agree
	// all 3 quantities agree within their error bars at family-wise level 1%
}

// With too few walkers nothing can be concluded.
func ExampleDecide_inconclusive() {
	checks := []compare.Check{
		compare.Proportion("hit:tip1", 2.0/3, 640, 1000),
		compare.Proportion("hit:tip2", 1.0/3, 360, 1000),
		compare.Mean("exit-time:mean", 0.500, 0.507, 0.011),
	}
	r := compare.Decide(checks, nil)
	fmt.Println(r.Verdict)
	fmt.Println(r.Explain)
	// Output:
	// inconclusive
	// no disagreement found, but the walker error bars are too wide: exit-time:mean could hide a difference of 6.46% (resolution 2%); about 11 times more walkers would settle it
}
