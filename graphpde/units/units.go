package units

import (
	"fmt"
	"math"
	"strconv"
	"strings"
	"unicode"
	"unicode/utf8"
)

// Base dimensions, the indices of a Dim.
const (
	Length      = iota // metre
	Mass               // kilogram
	Time               // second
	Current            // ampere
	Temperature        // kelvin
	Amount             // mole
	Luminous           // candela
	nBase
)

// Dim is a dimension: the exponent of each SI base unit, indexed by Length,
// Mass, Time, Current, Temperature, Amount and Luminous.
type Dim [nBase]int8

// Common dimensions.
var (
	None               = Dim{}
	DimLength          = Dim{Length: 1}
	DimArea            = Dim{Length: 2}
	DimTime            = Dim{Time: 1}
	DimTemperature     = Dim{Temperature: 1}
	DimVelocity        = Dim{Length: 1, Time: -1}
	DimDiffusivity     = Dim{Length: 2, Time: -1}                           // m²/s
	DimRate            = Dim{Time: -1}                                      // 1/s
	DimConductivity    = Dim{Length: 1, Mass: 1, Time: -3, Temperature: -1} // W/(m·K)
	DimFilmCoefficient = Dim{Mass: 1, Time: -3, Temperature: -1}            // W/(m²·K)
	DimCurrent         = Dim{Current: 1}
	DimVoltage         = Dim{Length: 2, Mass: 1, Time: -3, Current: -1}
	DimResistance      = Dim{Length: 2, Mass: 1, Time: -3, Current: -2}
	DimResistivity     = Dim{Length: 3, Mass: 1, Time: -3, Current: -2}     // Ω·m
	DimResistancePerL  = Dim{Length: 1, Mass: 1, Time: -3, Current: -2}     // Ω/m
	DimSpecificRm      = Dim{Length: 4, Mass: 1, Time: -3, Current: -2}     // Ω·m²
	DimCapacitance     = Dim{Length: -2, Mass: -1, Time: 4, Current: 2}     // F
	DimCapPerLength    = Dim{Length: -3, Mass: -1, Time: 4, Current: 2}     // F/m
	DimCapPerArea      = Dim{Length: -4, Mass: -1, Time: 4, Current: 2}     // F/m²
	DimPower           = Dim{Length: 2, Mass: 1, Time: -3}                  // W
	DimPowerPerTempK   = Dim{Length: 2, Mass: 1, Time: -3, Temperature: -1} // W/K
	DimConcentration   = Dim{Length: -3, Amount: 1}                         // mol/m³
)

// Mul returns the dimension of a product.
func (d Dim) Mul(e Dim) Dim {
	for i := range d {
		d[i] += e[i]
	}
	return d
}

// Pow returns d to the integer power n.
func (d Dim) Pow(n int) Dim {
	for i := range d {
		d[i] *= int8(n)
	}
	return d
}

var baseSymbols = [nBase]string{"m", "kg", "s", "A", "K", "mol", "cd"}

// String writes d in SI base units, "kg·m²·s⁻³·A⁻²" style but in ASCII:
// "m^2*kg*s^-3*A^-2"; the dimensionless Dim is "1".
func (d Dim) String() string {
	var parts []string
	for i, e := range d {
		switch {
		case e == 0:
		case e == 1:
			parts = append(parts, baseSymbols[i])
		default:
			parts = append(parts, baseSymbols[i]+"^"+strconv.Itoa(int(e)))
		}
	}
	if len(parts) == 0 {
		return "1"
	}
	return strings.Join(parts, "*")
}

// Pretty writes d for people: "kg/m^3", "W/(m*K)" style, with the base
// units in the order kg, m, s, A, K, mol, cd; "1" when dimensionless.
func (d Dim) Pretty() string {
	order := []int{Mass, Length, Time, Current, Temperature, Amount, Luminous}
	var num, den []string
	for _, i := range order {
		e := int(d[i])
		switch {
		case e == 1:
			num = append(num, baseSymbols[i])
		case e > 1:
			num = append(num, baseSymbols[i]+"^"+strconv.Itoa(e))
		case e == -1:
			den = append(den, baseSymbols[i])
		case e < -1:
			den = append(den, baseSymbols[i]+"^"+strconv.Itoa(-e))
		}
	}
	out := strings.Join(num, "*")
	if out == "" {
		out = "1"
	}
	switch len(den) {
	case 0:
	case 1:
		out += "/" + den[0]
	default:
		out += "/(" + strings.Join(den, "*") + ")"
	}
	return out
}

// Unit is a parsed unit expression: a value v in this unit is v*Scale (+
// Offset for an absolute temperature) in SI base units of dimension Dim.
// Offset is non-zero only for a unit that is one affine temperature scale
// alone ("degC", "degF"): there an absolute reading and a difference convert
// differently (ToSI and DeltaToSI).
type Unit struct {
	Scale  float64
	Offset float64
	Dim    Dim
	Text   string // the unit as written, trimmed
}

// ToSI converts an absolute value in u to SI: 20 degC → 293.15 K.
func (u Unit) ToSI(v float64) float64 { return v*u.Scale + u.Offset }

// DeltaToSI converts a difference in u to SI: 20 degC → 20 K.
func (u Unit) DeltaToSI(v float64) float64 { return v * u.Scale }

// FromSI converts an absolute SI value to u (the inverse of ToSI).
func (u Unit) FromSI(v float64) float64 { return (v - u.Offset) / u.Scale }

// Quantity is a parsed "NUMBER UNIT": the number as written and its unit.
type Quantity struct {
	Number float64
	Unit   Unit
}

// SI returns the quantity as an absolute value in SI base units.
func (q Quantity) SI() float64 { return q.Unit.ToSI(q.Number) }

// DeltaSI returns the quantity read as a difference, in SI base units.
func (q Quantity) DeltaSI() float64 { return q.Unit.DeltaToSI(q.Number) }

// Error is a unit string that cannot be read or does not have the dimension
// wanted. Error() gives one line, e.g.
//
//	"3 ohm" has dimension m^2*kg*s^-3*A^-2, want m*kg*s^-3*A^-2 (ohm/m)
type Error struct {
	Input string
	Msg   string
}

func (e *Error) Error() string { return fmt.Sprintf("%q: %s", e.Input, e.Msg) }

// unit table entry: a symbol, its factor to SI, its dimension, whether SI
// prefixes may be put before it, and an affine offset (temperatures).
type entry struct {
	scale    float64
	dim      Dim
	prefixOK bool
	offset   float64
}

// Conversion factors are exact by definition unless marked; the values of
// the inch-pound units are those of NIST Special Publication 811 (2008 ed.),
// Guide for the Use of the International System of Units, Appendix B.8/B.9.
var table = map[string]entry{
	// SI base and coherent derived units.
	"m":   {1, Dim{Length: 1}, true, 0},
	"g":   {1e-3, Dim{Mass: 1}, true, 0},
	"s":   {1, Dim{Time: 1}, true, 0},
	"A":   {1, Dim{Current: 1}, true, 0},
	"K":   {1, Dim{Temperature: 1}, true, 0},
	"mol": {1, Dim{Amount: 1}, true, 0},
	"cd":  {1, Dim{Luminous: 1}, true, 0},
	"Hz":  {1, Dim{Time: -1}, true, 0},
	"N":   {1, Dim{Length: 1, Mass: 1, Time: -2}, true, 0},
	"Pa":  {1, Dim{Length: -1, Mass: 1, Time: -2}, true, 0},
	"J":   {1, Dim{Length: 2, Mass: 1, Time: -2}, true, 0},
	"W":   {1, DimPower, true, 0},
	"C":   {1, Dim{Time: 1, Current: 1}, true, 0},
	"V":   {1, DimVoltage, true, 0},
	"F":   {1, DimCapacitance, true, 0},
	"ohm": {1, DimResistance, true, 0},
	"Ω":   {1, DimResistance, true, 0},
	"S":   {1, DimResistance.Pow(-1), true, 0},
	"L":   {1e-3, Dim{Length: 3}, true, 0},
	"l":   {1e-3, Dim{Length: 3}, true, 0},
	// Accepted for use with the SI (SP 811 Table 6).
	"min": {60, Dim{Time: 1}, false, 0},
	"h":   {3600, Dim{Time: 1}, false, 0},
	"d":   {86400, Dim{Time: 1}, false, 0},
	"bar": {1e5, Dim{Length: -1, Mass: 1, Time: -2}, true, 0},
	// Temperatures: alone, an absolute reading (offset); in a compound unit,
	// a difference (SP 811 §4.2.1.1 and B.9).
	"degC": {1, Dim{Temperature: 1}, false, 273.15},
	"°C":   {1, Dim{Temperature: 1}, false, 273.15},
	"degF": {1 / 1.8, Dim{Temperature: 1}, false, 459.67 / 1.8},
	"°F":   {1 / 1.8, Dim{Temperature: 1}, false, 459.67 / 1.8},
	"degR": {1 / 1.8, Dim{Temperature: 1}, false, 0},
	// Inch-pound units, SP 811 Appendix B.8.
	"in":   {0.0254, Dim{Length: 1}, false, 0},
	"ft":   {0.3048, Dim{Length: 1}, false, 0},
	"mil":  {2.54e-5, Dim{Length: 1}, false, 0},
	"cmil": {math.Pi / 4 * 2.54e-5 * 2.54e-5, Dim{Length: 2}, false, 0}, // circular mil
	"lb":   {0.45359237, Dim{Mass: 1}, false, 0},
	"lbf":  {0.45359237 * 9.80665, Dim{Length: 1, Mass: 1, Time: -2}, false, 0},
	"psi":  {0.45359237 * 9.80665 / (0.0254 * 0.0254), Dim{Length: -1, Mass: 1, Time: -2}, false, 0},
	"atm":  {101325, Dim{Length: -1, Mass: 1, Time: -2}, false, 0},
	"Btu":  {1055.05585262, Dim{Length: 2, Mass: 1, Time: -2}, false, 0}, // International Table Btu
	"cal":  {4.1868, Dim{Length: 2, Mass: 1, Time: -2}, true, 0},         // International Table calorie
	"hp":   {550 * 0.3048 * 0.45359237 * 9.80665, DimPower, false, 0},    // 550 ft·lbf/s
	"gal":  {231 * 0.0254 * 0.0254 * 0.0254, Dim{Length: 3}, false, 0},   // US gallon, 231 in³
	// Amount concentration.
	"M": {1000, DimConcentration, true, 0}, // mol/L
}

// prefixes in the order they are tried ("da" before "d").
var prefixes = []struct {
	sym    string
	factor float64
}{
	{"Y", 1e24}, {"Z", 1e21}, {"E", 1e18}, {"P", 1e15}, {"T", 1e12}, {"G", 1e9}, {"M", 1e6},
	{"k", 1e3}, {"h", 1e2}, {"da", 1e1}, {"d", 1e-1}, {"c", 1e-2}, {"m", 1e-3},
	{"u", 1e-6}, {"µ", 1e-6}, {"μ", 1e-6}, {"n", 1e-9}, {"p", 1e-12}, {"f", 1e-15},
	{"a", 1e-18}, {"z", 1e-21}, {"y", 1e-24},
}

// lookup resolves one unit symbol, with an optional SI prefix.
func lookup(sym string) (entry, bool) {
	if e, ok := table[sym]; ok {
		return e, true
	}
	for _, p := range prefixes {
		if rest, ok := strings.CutPrefix(sym, p.sym); ok && rest != "" {
			if e, ok := table[rest]; ok && e.prefixOK {
				e.scale *= p.factor
				return e, true
			}
		}
	}
	return entry{}, false
}

// ParseUnit reads a unit expression: symbols (with SI prefixes where the SI
// allows them), products written "*", "·" or a space, quotients "/",
// parentheses, and integer powers written "^2", "^-1", "**2", a trailing
// digit ("m2") or "²"/"³". "1/s" is a rate; "" is dimensionless. A
// temperature scale with an offset (degC, degF) alone is an absolute
// temperature; inside a compound unit it is a difference (W/(m*degC) equals
// W/(m*K)).
func ParseUnit(s string) (Unit, error) {
	p := &parser{src: s, s: strings.TrimSpace(s)}
	u := Unit{Scale: 1, Text: p.s}
	if p.s == "" {
		return u, nil
	}
	scale, dim, single, err := p.expr()
	if err != nil {
		return Unit{}, err
	}
	if p.i < len(p.s) {
		return Unit{}, p.fail(fmt.Sprintf("unexpected %q", p.s[p.i:]))
	}
	u.Scale, u.Dim = scale, dim
	if single != nil && single.offset != 0 {
		u.Offset = single.offset
	}
	return u, nil
}

// Parse reads "NUMBER UNIT" ("0.5 mm", "20 degC", "3 ohm/m", "1e-3 W/(m*K)").
// The space between number and unit may be left out ("5mm").
func Parse(s string) (Quantity, error) {
	num, rest, ok := splitNumber(s)
	if !ok {
		return Quantity{}, &Error{Input: s, Msg: "want a number followed by a unit, e.g. \"0.5 mm\""}
	}
	v, err := strconv.ParseFloat(num, 64)
	if err != nil || math.IsInf(v, 0) {
		return Quantity{}, &Error{Input: s, Msg: fmt.Sprintf("%q is not a finite number", num)}
	}
	u, err := ParseUnit(rest)
	if err != nil {
		if e, ok := err.(*Error); ok {
			e.Input = s
		}
		return Quantity{}, err
	}
	return Quantity{Number: v, Unit: u}, nil
}

// Convert parses s as "NUMBER UNIT", checks that its dimension is want and
// returns its absolute value in SI base units.
func Convert(s string, want Dim) (float64, error) {
	q, err := Parse(s)
	if err != nil {
		return 0, err
	}
	if q.Unit.Dim != want {
		return 0, dimError(s, q.Unit.Dim, want)
	}
	return q.SI(), nil
}

// ConvertDelta is Convert for a difference: "5 degC" is 5 K.
func ConvertDelta(s string, want Dim) (float64, error) {
	q, err := Parse(s)
	if err != nil {
		return 0, err
	}
	if q.Unit.Dim != want {
		return 0, dimError(s, q.Unit.Dim, want)
	}
	return q.DeltaSI(), nil
}

func dimError(s string, got, want Dim) error {
	ex := example(want)
	if ex == " ("+want.String()+")" {
		ex = ""
	}
	return &Error{Input: s, Msg: fmt.Sprintf("has dimension %v, want %v%s", got, want, ex)}
}

// example names a familiar unit of dimension d, for error messages.
func example(d Dim) string {
	for _, x := range []struct {
		d    Dim
		name string
	}{
		{None, "a plain number"}, {DimLength, "m"}, {DimArea, "m^2"}, {DimTime, "s"},
		{DimTemperature, "K or degC"}, {DimVelocity, "m/s"}, {DimDiffusivity, "m^2/s"},
		{DimRate, "1/s"}, {DimConductivity, "W/(m*K)"}, {DimFilmCoefficient, "W/(m^2*K)"},
		{DimCurrent, "A"}, {DimVoltage, "V"}, {DimResistance, "ohm"},
		{DimResistivity, "ohm*m"}, {DimResistancePerL, "ohm/m"}, {DimSpecificRm, "ohm*m^2"},
		{DimCapacitance, "F"}, {DimCapPerLength, "F/m"}, {DimCapPerArea, "F/m^2"},
		{DimPower, "W"}, {DimPowerPerTempK, "W/K"}, {DimConcentration, "mol/m^3"},
	} {
		if x.d == d {
			return " (" + x.name + ")"
		}
	}
	return ""
}

// LooksLikeQuantity reports whether s is a number followed by something
// that starts like a unit symbol (a letter, "°", "µ" or "Ω"), so that a
// reader can tell "25 mm" (a quantity) from "2*x" (an expression) before
// parsing either. It does not check that the unit exists.
func LooksLikeQuantity(s string) bool {
	_, rest, ok := splitNumber(s)
	if !ok {
		return false
	}
	r, _ := utf8.DecodeRuneInString(rest)
	return unicode.IsLetter(r) || r == '°' || r == 'Ω'
}

// splitNumber splits a leading decimal number from the rest (trimmed).
func splitNumber(s string) (num, rest string, ok bool) {
	s = strings.TrimSpace(s)
	i := 0
	if i < len(s) && (s[i] == '+' || s[i] == '-') {
		i++
	}
	digits := 0
	for i < len(s) && s[i] >= '0' && s[i] <= '9' {
		i++
		digits++
	}
	if i < len(s) && s[i] == '.' {
		i++
		for i < len(s) && s[i] >= '0' && s[i] <= '9' {
			i++
			digits++
		}
	}
	if digits == 0 {
		return "", "", false
	}
	if i < len(s) && (s[i] == 'e' || s[i] == 'E') {
		j := i + 1
		if j < len(s) && (s[j] == '+' || s[j] == '-') {
			j++
		}
		k := j
		for k < len(s) && s[k] >= '0' && s[k] <= '9' {
			k++
		}
		if k > j { // an exponent, not a unit starting with e/E
			i = k
		}
	}
	return s[:i], strings.TrimSpace(s[i:]), true
}

// parser is a recursive-descent reader of unit expressions:
//
//	expr   = factor { ("*" | "·" | " " | "/") factor }
//	factor = atom [ "^" int | "**" int | digits | "²" | "³" ]
//	atom   = symbol | "1" | "(" expr ")"
type parser struct {
	src string // the whole input, for errors
	s   string
	i   int
}

func (p *parser) fail(msg string) error { return &Error{Input: p.src, Msg: msg} }

func (p *parser) skipSpace() bool {
	j := p.i
	for p.i < len(p.s) && p.s[p.i] == ' ' {
		p.i++
	}
	return p.i > j
}

// expr returns the scale and dimension of a product/quotient and, when the
// expression is one symbol to the first power, its table entry.
func (p *parser) expr() (float64, Dim, *entry, error) {
	scale, dim, single, err := p.factor()
	if err != nil {
		return 0, Dim{}, nil, err
	}
	for {
		sp := p.skipSpace()
		if p.i >= len(p.s) || p.s[p.i] == ')' {
			return scale, dim, single, nil
		}
		div := false
		switch {
		case p.s[p.i] == '/':
			div = true
			p.i++
		case strings.HasPrefix(p.s[p.i:], "**"):
			return 0, Dim{}, nil, p.fail("misplaced \"**\"")
		case p.s[p.i] == '*':
			p.i++
		case strings.HasPrefix(p.s[p.i:], "·"):
			p.i += len("·")
		case sp: // a space between two factors is a product
		default:
			return 0, Dim{}, nil, p.fail(fmt.Sprintf("unexpected %q", p.s[p.i:]))
		}
		p.skipSpace()
		s2, d2, _, err := p.factor()
		if err != nil {
			return 0, Dim{}, nil, err
		}
		if div {
			scale /= s2
			dim = dim.Mul(d2.Pow(-1))
		} else {
			scale *= s2
			dim = dim.Mul(d2)
		}
		single = nil
	}
}

func (p *parser) factor() (float64, Dim, *entry, error) {
	var scale float64
	var dim Dim
	var single *entry
	switch {
	case p.i >= len(p.s):
		return 0, Dim{}, nil, p.fail("a unit is missing at the end")
	case p.s[p.i] == '(':
		p.i++
		var err error
		scale, dim, single, err = p.expr()
		if err != nil {
			return 0, Dim{}, nil, err
		}
		if p.i >= len(p.s) || p.s[p.i] != ')' {
			return 0, Dim{}, nil, p.fail("missing \")\"")
		}
		p.i++
	case p.s[p.i] == '1':
		p.i++
		scale = 1
	default:
		j := p.i
		for p.i < len(p.s) {
			r, n := utf8.DecodeRuneInString(p.s[p.i:])
			if !(unicode.IsLetter(r) || r == '°' || r == 'Ω' || r == '_') {
				break
			}
			p.i += n
		}
		sym := p.s[j:p.i]
		if sym == "" {
			return 0, Dim{}, nil, p.fail(fmt.Sprintf("unexpected %q", p.s[p.i:]))
		}
		e, ok := lookup(sym)
		if !ok {
			return 0, Dim{}, nil, p.fail(fmt.Sprintf("unknown unit %q", sym))
		}
		scale, dim, single = e.scale, e.dim, &e
	}
	n, ok, err := p.power()
	if err != nil {
		return 0, Dim{}, nil, err
	}
	if ok {
		if n != 1 {
			single = nil
		}
		scale = math.Pow(scale, float64(n))
		dim = dim.Pow(n)
	}
	return scale, dim, single, nil
}

// power reads an optional integer exponent.
func (p *parser) power() (int, bool, error) {
	rest := p.s[p.i:]
	switch {
	case strings.HasPrefix(rest, "²"):
		p.i += len("²")
		return 2, true, nil
	case strings.HasPrefix(rest, "³"):
		p.i += len("³")
		return 3, true, nil
	case strings.HasPrefix(rest, "^"), strings.HasPrefix(rest, "**"):
		if rest[0] == '^' {
			p.i++
		} else {
			p.i += 2
		}
		j := p.i
		if p.i < len(p.s) && (p.s[p.i] == '-' || p.s[p.i] == '+') {
			p.i++
		}
		if p.i < len(p.s) && p.s[p.i] == '(' { // ^(-1)
			p.i++
			n, ok, err := p.power0()
			if err != nil || !ok || p.i >= len(p.s) || p.s[p.i] != ')' {
				return 0, false, p.fail("bad exponent")
			}
			p.i++
			if p.s[j] == '-' {
				n = -n
			}
			return n, true, nil
		}
		for p.i < len(p.s) && p.s[p.i] >= '0' && p.s[p.i] <= '9' {
			p.i++
		}
		n, err := strconv.Atoi(p.s[j:p.i])
		if err != nil || n < -100 || n > 100 {
			return 0, false, p.fail("bad exponent " + strconv.Quote(p.s[j:p.i]))
		}
		return n, true, nil
	case rest != "" && rest[0] >= '0' && rest[0] <= '9':
		j := p.i
		for p.i < len(p.s) && p.s[p.i] >= '0' && p.s[p.i] <= '9' {
			p.i++
		}
		n, err := strconv.Atoi(p.s[j:p.i])
		if err != nil || n > 100 {
			return 0, false, p.fail("bad exponent " + strconv.Quote(p.s[j:p.i]))
		}
		return n, true, nil
	}
	return 0, false, nil
}

// power0 reads a signed integer inside parentheses.
func (p *parser) power0() (int, bool, error) {
	j := p.i
	if p.i < len(p.s) && (p.s[p.i] == '-' || p.s[p.i] == '+') {
		p.i++
	}
	for p.i < len(p.s) && p.s[p.i] >= '0' && p.s[p.i] <= '9' {
		p.i++
	}
	n, err := strconv.Atoi(p.s[j:p.i])
	if err != nil {
		return 0, false, err
	}
	return n, true, nil
}
