package montecarlo

// RCTime returns the network's RC time C·R, the time scale of
// DefaultTimeCap: C = Σ ρ_e L_e + Σ ρ_v the total capacity and R = Σ L_e/min
// a_e the sum of the edge resistances. A walker followed for a time t takes
// of the order of t/(C·R) times the steps of one crossing of the network, so
// a small multiple of 1000·C·R (the default cap of a network with a fixed
// node) is the most a time cap can sensibly be when walkers must finish in
// reasonable time. It validates net as Run does and returns the same errors.
// Cost O(nodes + edges).
func RCTime(net Network) (float64, error) {
	s := defaults(nil)
	m, err := prepare(net, &s)
	if err != nil {
		return 0, err
	}
	return m.rc, nil
}
