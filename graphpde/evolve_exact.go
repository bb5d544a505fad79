package graphpde

import "errors"

// evolveExact inverts the Laplace transform of the exact elements.
func evolveExact(net *Network, s *EvolveSettings) (*EvolveResult, error) {
	return nil, errors.New("method exact is not built yet")
}
