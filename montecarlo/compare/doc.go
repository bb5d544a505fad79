// Package compare holds the statistics of a cross-check between the PDE
// answers of a network problem and the estimates of its walkers: z-tests of
// means and probabilities, a Kolmogorov–Smirnov test of exit times against
// the PDE survival function (with censoring at a time cap), the
// multiple-comparison rule that turns many checks into one verdict, the
// estimation of node weights from walker departures, and the figures.
//
// It takes both engines' answers as plain numbers and functions, so it imports
// neither the PDE package nor the walker package; the command wires them.
//
// # Checks
//
// A Check compares one quantity. Names follow the cross-check contract:
// value, hit:NODE, killed, exit-time:mean, exit-time:distribution,
// occupation:EDGE, split:NODE:EDGE, weight:NODE:EDGE. Means and probabilities
// are z-tests, z = (walker − pde)/stderr with a two-sided normal p-value
// (Mean, Probability, Proportion, SplitChecks, WeightChecks). A proportion
// estimated as exactly 0 or 1 would have a zero standard error; Proportion
// uses BinomialStdErr, the binomial standard error at the estimate with one
// success and one failure added, which is about 1/n there and indistinguishable
// from sqrt(p(1−p)/n) elsewhere. A zero standard error passed to Mean never
// gives an infinite z: the check says so in its Note.
//
// # Exit-time distribution and censoring
//
// Distribution is the one-sample Kolmogorov–Smirnov test (Kolmogorov 1933;
// Smirnov 1948) of the walker exit times against F(t) = 1 − S(t). Walkers
// still out at the time cap t_c are kept: the test is run on min(τ, t_c), whose
// law is F below t_c with the mass S(t_c) at t_c. The distance
// D = sup_{t<t_c} |F_n(t) − F(t)| then sees both the shape of the law and the
// censored fraction, and its null law is that of sup_{u≤a} |B(u)| for a
// Brownian bridge B, a = F(t_c), derived here by reflection
// (CensoredKolmogorovQ; the asymptotic law of Koziol & Byar 1975, Technometrics
// 17:507–510 — from memory). Dropping the censored walkers would bias the
// sample to short times; giving them the time t_c and using the plain
// Kolmogorov law would make the test conservative. Finite samples use
// Stephens' scale √n + 0.12 + 0.11/√n (Stephens 1970, J. R. Stat. Soc. B
// 32:115–122 — from memory), within 4% of the exact finite-n p-value (Durbin
// 1973; Marsaglia, Tsang & Wang 2003, J. Stat. Softw. 8(18) — from memory)
// for n ≥ 10 and 0.01 ≤ p ≤ 0.2, as the tests measure.
//
// # The verdict
//
// Decide turns m checks into one verdict at family-wise level α = Level
// (default 1%) and resolution r = Resolution (default 0.02):
//
//  1. Disagree if some check has p < α/m (Bonferroni; valid under any
//     dependence between the checks, such as the split checks of one node,
//     which sum to 1). Each check's Pass is p ≥ α/m.
//  2. Otherwise Inconclusive if some check's error bar is too wide to have
//     seen a discrepancy of size r: its critical half-width
//     z_{1−α/(2m)}·stderr exceeds r (absolute for probabilities, relative to
//     |pde| for values and times), or for a distribution its critical distance
//     (CriticalD at level α/m) exceeds r; also if a check could not be
//     evaluated (NaN p-value) or there are no checks.
//  3. Otherwise Agree.
//
// Why a correction: each check at 3σ has a false-alarm rate of 0.27%, so 20
// correct checks raise at least one alarm 5.3% of the time, and the more
// quantities a cross-check compares the more certainly it cries wolf.
// Bonferroni keeps the probability of any false alarm below α whatever m is
// (TestDecideBonferroni measures 1.0% for 20 independent checks at α = 1%).
// Holm's step-down procedure would flag more checks once one fails, but gives
// the same verdict. Why "inconclusive": "no significant difference" from a
// run of 1000 walkers says little; the verdict Agree is only given when the
// walkers could have seen a difference of r, i.e. when the critical half-width
// — the difference detected with probability one half — is below r.
//
// The defaults are chosen so that, with 10^5 walkers, a two-arm junction
// whose walkers split 50/50 while the weights imply 2/3 : 1/3, or that
// contradicts its weights by 10 percentage points, is Disagree in every seed
// tried, and a consistent one Agree in at least 95% (TestForkPower). With
// 10^5 walkers the critical half-width of a probability is below 0.005 and of
// a mean exit time about 1%, so the resolution 0.02 leaves room for a
// ten-fold smaller run before the verdict becomes Inconclusive.
//
// # Weights from walkers
//
// FitWeights estimates the weights α_e of a junction from departure counts at
// equal diffusive radius, where p_e ∝ α_e·sqrt(ρ_e/a_e) (docs/walkers.md §3,
// walk on stars), with delta-method standard errors on the multinomial (derived in
// its comment, checked for spread and coverage by simulation).
//
// # Figures
//
// PlotSurvival draws the PDE survival function, the walkers' empirical
// survival function and its simultaneous confidence band
// ε = sqrt(ln(2/α)/(2n)) (Dvoretzky, Kiefer & Wolfowitz 1956, with Massart's
// constant, Ann. Probab. 18 (1990) 1269–1283 — from memory); PlotHits draws
// hitting probabilities with ±2 standard-error bars against the PDE values.
// Both use gonum/plot and write the format of the file extension (SVG, PNG,
// PDF, EPS).
//
// The package prints nothing and keeps no state; randomness appears only in
// its tests, from fixed PCG seeds.
package compare
