package netfile

import (
	"errors"

	"github.com/ramify-dev/ramify/graphpde/units"
)

// rawDim gives the dimension of the raw keys whose dimension does not depend
// on what the field u is. The other raw coefficients (diffusivity, drift,
// decay, source, capacity, weights, fixed, leak, inject) take any unit and
// are converted to SI base units: their dimension is that of u's equation,
// which the file does not state.
var rawDim = map[string]units.Dim{
	"length": units.DimLength,
}

// quantity converts the "NUMBER UNIT" string s given for key to SI. An
// absolute temperature ("20 degC") becomes kelvin.
func (t *tbl) quantity(key, s string) (float64, error) {
	q, err := units.Parse(s)
	if err == nil {
		if want, ok := rawDim[key]; ok && q.Unit.Dim != want {
			_, err = units.Convert(s, want) // the dimension error
		}
	}
	if err != nil {
		var ue *units.Error
		if errors.As(err, &ue) {
			return 0, t.fail(key, key+" = "+ue.Error())
		}
		return 0, t.fail(key, key+": "+err.Error())
	}
	if key == "fixed" && q.Unit.Dim[units.Length] == -3 {
		if ph := t.rd.phys(); ph.concDim == nil {
			d := q.Unit.Dim
			ph.concDim, ph.concUnit = &d, q.Unit
		}
	}
	if q.Unit.Dim == units.DimTemperature {
		switch q.Unit.Offset {
		case 273.15:
			t.rd.phys().celsius = true
		case 0:
		default:
			t.rd.phys().fahr = true
		}
	}
	return q.SI(), nil
}
