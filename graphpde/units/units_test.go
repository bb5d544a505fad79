package units

import (
	"errors"
	"math"
	"strings"
	"testing"
)

// sp811 is the relative accuracy of a factor printed with 7 significant
// digits in NIST SP 811 (2008), Appendix B.8: half a unit in the 7th digit.
const sp811 = 5e-7

// roundoff is for factors that are exact by definition.
const roundoff = 1e-14

// TestNIST811 checks composite conversions against the factors printed in
// NIST Special Publication 811 (2008 ed.), Guide for the Use of the SI,
// Appendix B.8 ("Factors for units listed alphabetically"). Each row parses
// the unit as we write it and compares its scale with the printed factor.
func TestNIST811(t *testing.T) {
	for _, c := range []struct {
		unit   string
		factor float64 // to SI, as printed in SP 811 B.8
		dim    Dim
		tol    float64
	}{
		{"in", 2.54e-2, DimLength, roundoff},
		{"ft", 3.048e-1, DimLength, roundoff},
		{"mil", 2.54e-5, DimLength, roundoff},
		{"cmil", 5.067075e-10, DimArea, sp811},
		{"ohm*cmil/ft", 1.662426e-9, DimResistivity, sp811},
		{"psi", 6.894757e3, Dim{Length: -1, Mass: 1, Time: -2}, sp811},
		{"hp", 7.456999e2, DimPower, sp811},
		{"gal", 3.785412e-3, Dim{Length: 3}, sp811},
		{"Btu/h", 2.930711e-1, DimPower, sp811},
		{"Btu/(h*ft^2*degF)", 5.678263, DimFilmCoefficient, sp811},
		{"Btu*in/(h*ft^2*degF)", 1.442279e-1, DimConductivity, sp811},
		{"Btu/(h*ft*degF)", 1.730735, DimConductivity, sp811},
		{"degF*h*ft^2/Btu", 1.761102e-1, Dim{Mass: -1, Time: 3, Temperature: 1}, sp811},
		{"ft^2/h", 2.58064e-5, DimDiffusivity, roundoff},
		{"lb/ft^3", 1.601846e1, Dim{Length: -3, Mass: 1}, sp811},
		{"Btu/(lb*degF)", 4.1868e3, Dim{Length: 2, Time: -2, Temperature: -1}, 1e-9},
		{"kW*h", 3.6e6, Dim{Length: 2, Mass: 1, Time: -2}, roundoff},
		{"cal", 4.1868, Dim{Length: 2, Mass: 1, Time: -2}, roundoff},
		{"atm", 1.01325e5, Dim{Length: -1, Mass: 1, Time: -2}, roundoff},
		{"lbf", 4.448222, Dim{Length: 1, Mass: 1, Time: -2}, sp811},
		// SI prefixes and the forms the network file uses (exact).
		{"mm", 1e-3, DimLength, roundoff},
		{"um", 1e-6, DimLength, roundoff},
		{"µm", 1e-6, DimLength, roundoff},
		{"uF/cm^2", 1e-2, DimCapPerArea, roundoff},
		{"µF/cm²", 1e-2, DimCapPerArea, roundoff},
		{"ohm*cm", 1e-2, DimResistivity, roundoff},
		{"ohm cm^2", 1e-4, DimSpecificRm, roundoff},
		{"kohm*cm2", 1e-1, DimSpecificRm, roundoff},
		{"W/(m*K)", 1, DimConductivity, roundoff},
		{"W/m/K", 1, DimConductivity, roundoff},
		{"W·m^-2·K^-1", 1, DimFilmCoefficient, roundoff},
		{"W/(m^2*degC)", 1, DimFilmCoefficient, roundoff},
		{"ohm/m", 1, DimResistancePerL, roundoff},
		{"nS", 1e-9, DimResistance.Pow(-1), roundoff},
		{"Mohm", 1e6, DimResistance, roundoff},
		{"kΩ", 1e3, DimResistance, roundoff},
		{"pF/mm", 1e-9, DimCapPerLength, roundoff},
		{"1/s", 1, DimRate, roundoff},
		{"s^-1", 1, DimRate, roundoff},
		{"mm^2/s", 1e-6, DimDiffusivity, roundoff},
		{"m/d", 1 / 86400.0, DimVelocity, roundoff},
		{"min", 60, DimTime, roundoff},
		{"ms", 1e-3, DimTime, roundoff},
		{"mM", 1, DimConcentration, roundoff},
		{"mol/L", 1e3, DimConcentration, roundoff},
		{"dam", 10, DimLength, roundoff},
		{"", 1, None, 0},
	} {
		u, err := ParseUnit(c.unit)
		if err != nil {
			t.Errorf("%q: %v", c.unit, err)
			continue
		}
		if u.Dim != c.dim {
			t.Errorf("%q: dimension %v, want %v", c.unit, u.Dim, c.dim)
		}
		if rel := math.Abs(u.Scale-c.factor) / c.factor; rel > c.tol {
			t.Errorf("%q: factor %.9g, SP 811 gives %.9g (rel. diff %.2g > %g)", c.unit, u.Scale, c.factor, rel, c.tol)
		}
	}
}

// TestTemperatures checks the affine scales (SP 811 §4.2.1.1 and B.9:
// T/K = t/°C + 273.15, T/K = (t/°F + 459.67)/1.8): absolute readings
// shift, differences and compound units do not.
func TestTemperatures(t *testing.T) {
	for _, c := range []struct {
		in        string
		abs, diff float64 // kelvin
	}{
		{"20 degC", 293.15, 20},
		{"-273.15 °C", 0, -273.15},
		{"32 degF", 273.15, 32 / 1.8},
		{"212 °F", 373.15, 212 / 1.8},
		{"-40 degF", 233.15, -40 / 1.8},
		{"98.6 degF", 310.15, 98.6 / 1.8},
		{"300 K", 300, 300},
		{"491.67 degR", 273.15, 273.15},
		{"20 (degC)", 293.15, 20},
	} {
		a, err := Convert(c.in, DimTemperature)
		if err != nil {
			t.Fatalf("%q: %v", c.in, err)
		}
		d, err := ConvertDelta(c.in, DimTemperature)
		if err != nil {
			t.Fatalf("%q: %v", c.in, err)
		}
		if math.Abs(a-c.abs) > 1e-12*(1+math.Abs(c.abs)) || math.Abs(d-c.diff) > 1e-12*(1+math.Abs(c.diff)) {
			t.Errorf("%q: absolute %.15g K, difference %.15g K; want %.15g, %.15g", c.in, a, d, c.abs, c.diff)
		}
		q, _ := Parse(c.in)
		if back := q.Unit.FromSI(a); math.Abs(back-q.Number) > 1e-12*(1+math.Abs(back)) {
			t.Errorf("%q: FromSI(ToSI) = %g", c.in, back)
		}
	}
	// In a compound unit a temperature is a difference: W/(m*degC) = W/(m*K),
	// with no offset at all.
	u, err := ParseUnit("W/(m*degC)")
	if err != nil || u.Offset != 0 || u.Scale != 1 {
		t.Errorf("W/(m*degC) = %+v, %v; want scale 1, no offset", u, err)
	}
	if u, _ := ParseUnit("degC^2"); u.Offset != 0 {
		t.Errorf("degC^2 has an offset")
	}
}

func TestParse(t *testing.T) {
	for _, c := range []struct {
		in   string
		si   float64
		want Dim
	}{
		{"0.5 mm", 5e-4, DimLength},
		{"25mm", 0.025, DimLength},
		{"  2e-6 m ", 2e-6, DimLength},
		{"1.5E3 ohm*cm", 15, DimResistivity},
		{"-3 V", -3, DimVoltage},
		{"3 ohm/m", 3, DimResistancePerL},
		{"20000 ohm*cm^2", 2, DimSpecificRm},
		{"1 uF/cm^2", 1e-2, DimCapPerArea},
		{"2 um", 2e-6, DimLength},
		{"398 W/(m*K)", 398, DimConductivity},
		{"1 e", 0, None}, // "e" is not a unit: error expected below
	} {
		v, err := Convert(c.in, c.want)
		if c.in == "1 e" {
			if err == nil {
				t.Errorf("%q: no error", c.in)
			}
			continue
		}
		if err != nil {
			t.Errorf("%q: %v", c.in, err)
			continue
		}
		if math.Abs(v-c.si) > roundoff*math.Abs(c.si) {
			t.Errorf("%q = %.15g, want %.15g", c.in, v, c.si)
		}
	}
}

func TestErrors(t *testing.T) {
	for _, c := range []struct {
		in   string
		want Dim
		msg  string
	}{
		{"3 ohm", DimResistancePerL, `"3 ohm": has dimension m^2*kg*s^-3*A^-2, want m*kg*s^-3*A^-2 (ohm/m)`},
		{"5 furlong", DimLength, `unknown unit "furlong"`},
		{"5 kmin", DimTime, `unknown unit "kmin"`}, // no prefix on a non-SI unit
		{"mm", DimLength, "want a number followed by a unit"},
		{"5 m/", DimLength, "a unit is missing at the end"},
		{"5 W/(m*K", DimConductivity, `missing ")"`},
		{"5 m^x", DimLength, "bad exponent"},
		{"5 m + 2 m", DimLength, "unexpected"},
		{"1e999 m", DimLength, "not a finite number"},
	} {
		_, err := Convert(c.in, c.want)
		var ue *Error
		if !errors.As(err, &ue) {
			t.Errorf("%q: error %v is not a *units.Error", c.in, err)
			continue
		}
		if !strings.Contains(err.Error(), c.msg) {
			t.Errorf("%q: error %q does not contain %q", c.in, err, c.msg)
		}
	}
}

func TestLooksLikeQuantity(t *testing.T) {
	for in, want := range map[string]bool{
		"25 mm": true, "20 degC": true, "1e-3 W": true, "5mm": true, "3 Ω": true, "20 °C": true,
		"2*x": false, "x": false, "2": false, "1e-3": false, "exp(u)": false, "0.5 * u": false, "-1": false,
	} {
		if got := LooksLikeQuantity(in); got != want {
			t.Errorf("LooksLikeQuantity(%q) = %v, want %v", in, got, want)
		}
	}
}

func TestDimString(t *testing.T) {
	if s := DimResistance.String(); s != "m^2*kg*s^-3*A^-2" {
		t.Errorf("ohm: %s", s)
	}
	for d, want := range map[Dim]string{DimConcentration.Mul(Dim{Amount: -1, Mass: 1}): "kg/m^3", DimConductivity: "kg*m/(s^3*K)", DimRate: "1/s", DimLength: "m"} {
		if got := d.Pretty(); got != want {
			t.Errorf("Pretty(%v) = %q, want %q", d, got, want)
		}
	}
	if s := None.String(); s != "1" {
		t.Errorf("none: %s", s)
	}
}
