package netfile

import (
	"fmt"
	"math"
	"slices"
	"sort"
	"strconv"
	"strings"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/graphpde/units"
	"github.com/ramify-dev/ramify/vertex"
)

// Physical models: an edge may carry one sub-table naming a model of the
// trade instead of raw coefficients, and a node may carry node elements.
// Each model maps its quantities (converted to SI) to the raw coefficients
// a, b, c, f, ρ of
//
//	ρ ∂_t u = ∂_x(a ∂_x u) + b ∂_x u − c u + f.
//
// The mappings and their sources are on wireModel, cableModel,
// channelModel and nodeElement below, and in the README's file reference.

// edgeModels are the edge sub-tables, each with its keys.
var edgeModels = map[string][]string{
	"wire":    {"conductivity", "diameter", "area", "perimeter", "film", "ambient", "current", "resistivity", "resistivity_slope", "resistivity_at", "density", "heat_capacity"},
	"cable":   {"diameter", "axial_resistivity", "membrane_resistance", "membrane_capacitance", "resting"},
	"rc":      {"resistance", "capacitance", "leakage"},
	"channel": {"area", "porosity", "velocity", "dispersion", "dispersivity", "diffusion", "decay", "half_life", "retardation"},
}

// nodeElements are the node sub-tables (and the scalar key load).
var nodeElements = map[string][]string{
	"convection": {"film", "area", "ambient"},
	"driver":     {"resistance", "voltage"},
	"soma":       {"diameter", "membrane_resistance", "membrane_capacitance", "resting"},
}

// modelField is what u is under each model.
var modelField = map[string]struct{ field, unit, flux, fluxUnit, source, loss string }{
	"wire":    {"temperature", "K", "heat flow", "W", "Joule heat", "heat to the surroundings"},
	"cable":   {"membrane potential", "V", "axial current", "A", "", "membrane current"},
	"rc":      {"voltage", "V", "current", "A", "", "leakage current"},
	"channel": {"concentration", "", "mass flow", "", "", "decay"},
}

// rawCoefKeys are the edge keys that a model sets itself.
var rawCoefKeys = []string{"diffusivity", "drift", "decay", "source", "capacity", "weight", "weights"}

// physState collects the physical description while a file is read.
type physState struct {
	models   []string // in first-use order
	edges    map[string]graphpde.PhysicalEdge
	celsius  bool // a temperature was written in degC
	fahr     bool
	concDim  *units.Dim // dimension of concentrations given with units
	concUnit units.Unit // the unit of the first of them, for display
	carry    map[string]float64
	nodes    map[string]graphpde.PhysicalNode
	hasModel bool
}

// sub is a model or element sub-table of t.
func (t *tbl) sub(key string) (*tbl, error) {
	m, ok := t.m[key].(map[string]any)
	if !ok {
		return nil, t.fail(key, fmt.Sprintf("%s must be a table, e.g. %s = { ... }, not %s", key, key, typeName(t.m[key])))
	}
	return &tbl{rd: t.rd, obj: t.object(), kind: t.kind, id: t.id, path: append(slices.Clip(t.path), key), m: m}, nil
}

// q reads key of a model table as a quantity of dimension want (a bare
// number is taken as SI). abs reads a temperature as an absolute reading.
// ok is false when the key is absent.
func (t *tbl) q(key string, want units.Dim, abs bool) (v float64, ok bool, err error) {
	raw, present := t.m[key]
	if !present {
		return 0, false, nil
	}
	name := t.path[len(t.path)-1] + "." + key
	switch x := raw.(type) {
	case string:
		qq, perr := units.Parse(x)
		if perr != nil {
			return 0, true, t.fail(key, name+" = "+perr.Error())
		}
		if qq.Unit.Dim != want {
			_, derr := units.Convert(x, want)
			return 0, true, t.fail(key, name+" = "+derr.Error())
		}
		if abs {
			v = qq.SI()
		} else {
			v = qq.DeltaSI()
		}
		if want == units.DimTemperature && abs {
			switch qq.Unit.Offset {
			case 273.15:
				t.rd.phys().celsius = true
			case 0:
			default:
				t.rd.phys().fahr = true
			}
		}
	default:
		f, isNum := toFloat(raw)
		if !isNum {
			return 0, true, t.fail(key, fmt.Sprintf("%s must be a number or a \"NUMBER UNIT\" string, not %s", name, typeName(raw)))
		}
		v = f
	}
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return 0, true, t.fail(key, fmt.Sprintf("%s = %g must be finite", name, v))
	}
	return v, true, nil
}

// need reads a required quantity obeying r.
func (t *tbl) need(key string, want units.Dim, r rule) (float64, error) {
	v, ok, err := t.q(key, want, false)
	if err != nil {
		return 0, err
	}
	if !ok {
		return 0, t.fail("", fmt.Sprintf("%s: missing key %q", t.path[len(t.path)-1], key))
	}
	return v, t.rule(key, v, r)
}

// opt reads an optional quantity obeying r, def when absent.
func (t *tbl) opt(key string, want units.Dim, r rule, def float64) (float64, error) {
	v, ok, err := t.q(key, want, false)
	if err != nil || !ok {
		return def, err
	}
	return v, t.rule(key, v, r)
}

func (t *tbl) rule(key string, v float64, r rule) error {
	if reason := check(v, r); reason != "" {
		return t.bad(key, t.path[len(t.path)-1]+"."+key, reason)
	}
	return nil
}

func (rd *reader) phys() *physState {
	if rd.ph == nil {
		rd.ph = &physState{edges: map[string]graphpde.PhysicalEdge{}, carry: map[string]float64{}, nodes: map[string]graphpde.PhysicalNode{}}
	}
	return rd.ph
}

// edgeModel replaces a model sub-table of edge table t by the raw
// coefficients it implies. It does nothing when t has no model.
func (rd *reader) edgeModel(t *tbl) error {
	var model string
	for _, k := range t.keys() {
		if _, ok := edgeModels[k]; ok {
			if model != "" {
				return t.fail(k, fmt.Sprintf("give one model, not both %s and %s", model, k))
			}
			model = k
		}
	}
	if model == "" {
		return nil
	}
	for _, k := range rawCoefKeys {
		if _, ok := t.m[k]; ok {
			return t.fail(k, fmt.Sprintf("%s is set by the %s model; remove it (or the model)", k, model))
		}
	}
	mt, err := t.sub(model)
	if err != nil {
		return err
	}
	if err := mt.checkKeys(edgeModels[model], nil); err != nil {
		return err
	}
	ph := rd.phys()
	if !slices.Contains(ph.models, model) {
		ph.models = append(ph.models, model)
	}
	var a, b, c, f, rho float64
	var fExpr string // a source that depends on u (wire with expressions)
	pe := graphpde.PhysicalEdge{Set: true}
	switch model {
	case "wire":
		a, c, f, rho, pe, fExpr, err = wireModel(mt)
	case "cable":
		a, c, f, rho, pe, err = cableModel(mt)
	case "rc":
		var r, cap float64
		if r, err = mt.need("resistance", units.DimResistancePerL, positive); err != nil {
			return err
		}
		if cap, err = mt.need("capacitance", units.DimCapPerLength, positive); err != nil {
			return err
		}
		var g float64
		if g, err = mt.opt("leakage", units.DimResistancePerL.Pow(-1).Mul(units.DimLength.Pow(-2)), nonNeg, 0); err != nil {
			return err
		}
		a, c, rho = 1/r, g, cap
		pe.K = g
	case "channel":
		a, b, c, rho, pe, err = channelModel(mt)
	}
	if err != nil {
		return err
	}
	delete(t.m, model)
	t.m["diffusivity"], t.m["drift"], t.m["decay"], t.m["source"], t.m["capacity"] = a, b, c, f, rho
	if fExpr != "" {
		t.m["source"] = fExpr
	}
	t.order = nil
	ph.edges[t.id] = pe
	ph.hasModel = true
	return nil
}

// wireModel maps a conducting wire or fin of conductivity k, cross-section
// A and perimeter P (or a round wire of diameter D: A = πD²/4, P = πD),
// losing heat to surroundings at T∞ through a film coefficient h and
// carrying a current I through a material of resistivity
// ρ_e(T) = ρ₀(1 + α(T − T₀)):
//
//	ρ_m c_p A ∂_t T = ∂_x(k A ∂_x T) − h P (T − T∞) + I² ρ_e(T) / A,
//
// so a = kA, c = hP − I²ρ₀α/A, f = hP T∞ + I²ρ₀(1 − αT₀)/A,
// ρ = ρ_m c_p A. The fin equation is that of Incropera, DeWitt, Bergman and
// Lavine, Fundamentals of Heat and Mass Transfer, 6th ed. (2007), §3.6.1,
// eq. 3.66, with the Joule source of §3.5.3 (uniform generation q̇ = I²ρ_e/A²).
//
// The current and the resistivity may also be expressions of the network
// file (strings that are not "NUMBER UNIT" quantities), in SI units with u
// the temperature in kelvin and the [parameters] names: then
// f = hP T∞ + I²ρₑ(u)/A is an expression in u, solved by the nonlinear
// solver (and swept with ramify sweep when it names a parameter).
func wireModel(mt *tbl) (a, c, f, rho float64, pe graphpde.PhysicalEdge, fExpr string, err error) {
	fail := func(e error) (float64, float64, float64, float64, graphpde.PhysicalEdge, string, error) {
		return 0, 0, 0, 0, pe, "", e
	}
	k, err := mt.need("conductivity", units.DimConductivity, positive)
	if err != nil {
		return fail(err)
	}
	area, perim, err := crossSection(mt)
	if err != nil {
		return fail(err)
	}
	h, err := mt.opt("film", units.DimFilmCoefficient, nonNeg, 0)
	if err != nil {
		return fail(err)
	}
	var tinf float64
	if h > 0 {
		v, ok, err := mt.q("ambient", units.DimTemperature, true)
		if err != nil {
			return fail(err)
		}
		if !ok {
			return fail(mt.fail("", `wire: missing key "ambient" (the surroundings' temperature, needed with film)`))
		}
		if err := mt.rule("ambient", v, positive); err != nil {
			return fail(err)
		}
		tinf = v
	}
	isExpr := func(k string) (string, bool) {
		s, ok := mt.m[k].(string)
		return s, ok && !units.LooksLikeQuantity(s)
	}
	curExpr, curIsExpr := isExpr("current")
	rhoExpr, rhoIsExpr := isExpr("resistivity")
	if curIsExpr || rhoIsExpr {
		if _, slope := mt.m["resistivity_slope"]; slope && rhoIsExpr {
			return fail(mt.fail("resistivity_slope", "wire: resistivity_slope goes with a number for resistivity, not an expression (write the temperature dependence into the expression)"))
		}
		num := func(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }
		if !curIsExpr {
			v, err := mt.opt("current", units.DimCurrent, finite, 0)
			if err != nil {
				return fail(err)
			}
			curExpr = num(v)
		}
		if !rhoIsExpr {
			r0, err := mt.need("resistivity", units.DimResistivity, positive)
			if err != nil {
				return fail(err)
			}
			al, err := mt.opt("resistivity_slope", units.DimTemperature.Pow(-1), finite, 0)
			if err != nil {
				return fail(err)
			}
			at := 293.15
			if v, ok, err := mt.q("resistivity_at", units.DimTemperature, true); err != nil {
				return fail(err)
			} else if ok {
				at = v
			}
			rhoExpr = fmt.Sprintf("%s*(1 + %s*(u - %s))", num(r0), num(al), num(at))
		}
		fExpr = fmt.Sprintf("%s + (%s)^2*(%s)/%s", num(h*perim*tinf), curExpr, rhoExpr, num(area))
	}
	var cur float64
	if !curIsExpr && !rhoIsExpr {
		if cur, err = mt.opt("current", units.DimCurrent, finite, 0); err != nil {
			return fail(err)
		}
	}
	var rho0, alpha, t0 float64
	if cur != 0 {
		if rho0, err = mt.need("resistivity", units.DimResistivity, positive); err != nil {
			return fail(err)
		}
		if alpha, err = mt.opt("resistivity_slope", units.DimTemperature.Pow(-1), finite, 0); err != nil {
			return fail(err)
		}
		t0 = 293.15
		if v, ok, err := mt.q("resistivity_at", units.DimTemperature, true); err != nil {
			return fail(err)
		} else if ok {
			t0 = v
		}
	}
	joule := cur * cur * rho0 / area // W/m at ρ₀ (0 with expressions)
	a = k * area
	c = h*perim - joule*alpha
	f = h*perim*tinf + joule*(1-alpha*t0)
	if c < 0 {
		return fail(mt.fail("current", fmt.Sprintf("wire: the Joule heat grows with temperature faster than the film removes it (I²ρ₀α/A = %.4g > hP = %.4g W/(m*K)): no steady state is guaranteed", joule*alpha, h*perim)))
	}
	dens, err := mt.opt("density", units.Dim{units.Length: -3, units.Mass: 1}, positive, 0)
	if err != nil {
		return fail(err)
	}
	cp, err := mt.opt("heat_capacity", units.Dim{units.Length: 2, units.Time: -2, units.Temperature: -1}, positive, 0)
	if err != nil {
		return fail(err)
	}
	rho = 1
	if dens > 0 && cp > 0 {
		rho = dens * cp * area
	}
	pe.K, pe.Ref = h*perim, tinf
	return a, c, f, rho, pe, fExpr, nil
}

// crossSection reads diameter, or area and perimeter.
func crossSection(mt *tbl) (area, perim float64, err error) {
	_, hasD := mt.m["diameter"]
	_, hasA := mt.m["area"]
	_, hasP := mt.m["perimeter"]
	switch {
	case hasD && (hasA || hasP):
		return 0, 0, mt.fail("diameter", "wire: give diameter (round wire) or area and perimeter, not both")
	case hasD:
		d, err := mt.need("diameter", units.DimLength, positive)
		return math.Pi * d * d / 4, math.Pi * d, err
	}
	if area, err = mt.need("area", units.DimArea, positive); err != nil {
		return 0, 0, err
	}
	perim, err = mt.opt("perimeter", units.DimLength, nonNeg, 0)
	if err == nil && !hasP {
		if _, film := mt.m["film"]; film {
			err = mt.fail("", `wire: missing key "perimeter" (or give diameter), needed with film`)
		}
	}
	return area, perim, err
}

// cableModel maps a passive cylindrical membrane cable of diameter d, axial
// resistivity R_i (Ω·m), specific membrane resistance R_m (Ω·m²) and
// capacitance C_m (F/m²), resting potential E:
//
//	C_m πd ∂_t V = ∂_x(πd²/(4R_i) ∂_x V) − (πd/R_m)(V − E),
//
// so a = πd²/(4R_i), c = πd/R_m, f = πd E/R_m, ρ = C_m πd; the length
// constant is λ = √(a/c) = √(d R_m/(4R_i)) and the input conductance of a
// semi-infinite cable G∞ = √(ac) (Johnston and Wu, Foundations of Cellular
// Neurophysiology, 1995, ch. 4, from memory; Koch, Biophysics of
// Computation, 1999, ch. 2, from memory).
func cableModel(mt *tbl) (a, c, f, rho float64, pe graphpde.PhysicalEdge, err error) {
	fail := func(e error) (float64, float64, float64, float64, graphpde.PhysicalEdge, error) {
		return 0, 0, 0, 0, pe, e
	}
	d, err := mt.need("diameter", units.DimLength, positive)
	if err != nil {
		return fail(err)
	}
	ri, err := mt.need("axial_resistivity", units.DimResistivity, positive)
	if err != nil {
		return fail(err)
	}
	rm, err := mt.need("membrane_resistance", units.DimSpecificRm, positive)
	if err != nil {
		return fail(err)
	}
	// 1 µF/cm² = 0.01 F/m², the usual biological membrane value (common
	// practice, no source).
	cm, err := mt.opt("membrane_capacitance", units.DimCapPerArea, positive, 0.01)
	if err != nil {
		return fail(err)
	}
	e, err := mt.opt("resting", units.DimVoltage, finite, 0)
	if err != nil {
		return fail(err)
	}
	a = math.Pi * d * d / (4 * ri)
	c = math.Pi * d / rm
	f = c * e
	rho = cm * math.Pi * d
	pe.K, pe.Ref = c, e
	return a, c, f, rho, pe, nil
}

// channelModel maps a flow channel of cross-section A, porosity φ, pore
// velocity v (along from → to), longitudinal dispersion D (given, or
// D = α_L|v| + D_m from a dispersivity α_L and a diffusion coefficient D_m),
// first-order decay k (or a half-life, k = ln 2/t½) and linear equilibrium
// sorption by a retardation factor R ≥ 1, for a concentration C:
//
//	φAR ∂_t C = ∂_x(φAD ∂_x C) − φAv ∂_x C − φARk C,
//
// so a = φAD, b = −φAv, c = φARk, ρ = φAR, and the flow Q = φAv carries
// Q·C along the channel (Bear, Dynamics of Fluids in Porous Media, 1972,
// §10.4, from memory; decay of both dissolved and sorbed tracer). Mass is
// conserved at a junction when the flows Q balance there, which the reader
// checks; at an end of the network (a balance node with one edge) water
// enters or leaves at the node's concentration with no dispersive flux
// (the zero-gradient outlet condition).
func channelModel(mt *tbl) (a, b, c, rho float64, pe graphpde.PhysicalEdge, err error) {
	fail := func(e error) (float64, float64, float64, float64, graphpde.PhysicalEdge, error) {
		return 0, 0, 0, 0, pe, e
	}
	area, err := mt.need("area", units.DimArea, positive)
	if err != nil {
		return fail(err)
	}
	phi, err := mt.opt("porosity", units.None, positive, 1)
	if err != nil {
		return fail(err)
	}
	if phi > 1 {
		return fail(mt.bad("porosity", "channel.porosity", fmt.Sprintf("= %g must be at most 1", phi)))
	}
	v, err := mt.opt("velocity", units.DimVelocity, finite, 0)
	if err != nil {
		return fail(err)
	}
	_, hasD := mt.m["dispersion"]
	_, hasAL := mt.m["dispersivity"]
	var d float64
	switch {
	case hasD && hasAL:
		return fail(mt.fail("dispersivity", "channel: give dispersion, or dispersivity (and diffusion), not both"))
	case hasD:
		if d, err = mt.need("dispersion", units.DimDiffusivity, positive); err != nil {
			return fail(err)
		}
	default:
		al, err := mt.opt("dispersivity", units.DimLength, nonNeg, 0)
		if err != nil {
			return fail(err)
		}
		dm, err := mt.opt("diffusion", units.DimDiffusivity, nonNeg, 0)
		if err != nil {
			return fail(err)
		}
		d = al*math.Abs(v) + dm
		if !(d > 0) {
			return fail(mt.fail("", "channel: the dispersion coefficient is 0: give dispersion, or dispersivity with a velocity, or diffusion"))
		}
	}
	_, hasK := mt.m["decay"]
	_, hasT := mt.m["half_life"]
	var k float64
	switch {
	case hasK && hasT:
		return fail(mt.fail("half_life", "channel: give decay or half_life, not both"))
	case hasT:
		th, err := mt.need("half_life", units.DimTime, positive)
		if err != nil {
			return fail(err)
		}
		k = math.Ln2 / th
	default:
		if k, err = mt.opt("decay", units.DimRate, nonNeg, 0); err != nil {
			return fail(err)
		}
	}
	r, err := mt.opt("retardation", units.None, positive, 1)
	if err != nil {
		return fail(err)
	}
	if r < 1 {
		return fail(mt.bad("retardation", "channel.retardation", fmt.Sprintf("= %g must be ≥ 1", r)))
	}
	a = phi * area * d
	b = -phi * area * v
	c = phi * area * r * k
	rho = phi * area * r
	pe.K = c
	pe.Carry = phi * area * v
	return a, b, c, rho, pe, nil
}

// nodeElement replaces the node elements of node table t (convection,
// driver, soma, load) by leak, inject and capacity.
//
//	convection: leak hA, inject hA T∞ (a surface A at film h to T∞)
//	driver:     leak 1/R, inject V/R (a source V behind a resistance R)
//	soma:       a sphere of diameter d: area πd², leak area/R_m,
//	            inject area·E/R_m, capacity C_m·area
//	load:       capacity C (a lumped capacitance)
//
// Several elements add up; none may be combined with fixed or with the
// raw leak or capacity keys; a raw inject (an electrode, a heater) adds to
// the injection the elements imply.
func (rd *reader) nodeElement(t *tbl) error {
	var found []string
	for _, k := range t.keys() {
		if _, ok := nodeElements[k]; ok || k == "load" {
			found = append(found, k)
		}
	}
	if len(found) == 0 {
		return nil
	}
	if _, fixed := t.m["fixed"]; fixed {
		return t.fail(found[0], found[0]+" is not allowed on a fixed node (it has no balance law)")
	}
	for _, k := range []string{"leak", "capacity"} {
		if _, ok := t.m[k]; ok {
			return t.fail(k, fmt.Sprintf("%s is set by %s; remove one of them", k, strings.Join(found, " and ")))
		}
	}
	var leak, inject, capacity float64
	var pn graphpde.PhysicalNode
	for _, k := range found {
		if k == "load" {
			lt := &tbl{rd: rd, obj: t.object(), kind: t.kind, id: t.id, path: t.path, m: t.m}
			v, err := lt.need("load", units.DimCapacitance, nonNeg)
			if err != nil {
				return err
			}
			capacity += v
			continue
		}
		st, err := t.sub(k)
		if err != nil {
			return err
		}
		if err := st.checkKeys(nodeElements[k], nil); err != nil {
			return err
		}
		switch k {
		case "convection":
			h, err := st.need("film", units.DimFilmCoefficient, nonNeg)
			if err != nil {
				return err
			}
			area, err := st.need("area", units.DimArea, nonNeg)
			if err != nil {
				return err
			}
			tinf, ok, err := st.q("ambient", units.DimTemperature, true)
			if err != nil {
				return err
			}
			if !ok {
				return st.fail("", `convection: missing key "ambient"`)
			}
			leak += h * area
			inject += h * area * tinf
			pn.Set, pn.K, pn.Ref = true, pn.K+h*area, tinf
		case "driver":
			r, err := st.need("resistance", units.DimResistance, positive)
			if err != nil {
				return err
			}
			v, err := st.opt("voltage", units.DimVoltage, finite, 0)
			if err != nil {
				return err
			}
			leak += 1 / r
			inject += v / r
			pn.Driver = true
		case "soma":
			d, err := st.need("diameter", units.DimLength, positive)
			if err != nil {
				return err
			}
			rm, err := st.need("membrane_resistance", units.DimSpecificRm, positive)
			if err != nil {
				return err
			}
			cm, err := st.opt("membrane_capacitance", units.DimCapPerArea, positive, 0.01)
			if err != nil {
				return err
			}
			e, err := st.opt("resting", units.DimVoltage, finite, 0)
			if err != nil {
				return err
			}
			area := math.Pi * d * d
			leak += area / rm
			inject += area * e / rm
			capacity += cm * area
			pn.Set, pn.K, pn.Ref = true, pn.K+area/rm, e
		}
		delete(t.m, k)
	}
	delete(t.m, "load")
	if pn.Set && pn.Driver {
		return t.fail(found[0], "a driver cannot share a node with convection or a soma")
	}
	if pn.Set && pn.K != leak {
		pn.Set = false // two surfaces at different ambients: report plain leak and inject
	}
	rd.phys().nodes[t.id] = pn
	if leak != 0 {
		t.m["leak"] = leak
	}
	if inject != 0 {
		if _, ok := t.m["inject"]; ok { // an electrode or heater adds to it
			lt := &tbl{rd: rd, obj: t.object(), kind: t.kind, id: t.id, path: t.path, m: t.m}
			v, err := lt.number("inject")
			if err != nil {
				return err
			}
			if err := lt.rule("inject", v, finite); err != nil {
				return err
			}
			inject += v
		}
		t.m["inject"] = inject
	}
	if capacity != 0 {
		t.m["capacity"] = capacity
	}
	t.order = nil
	return nil
}

// physical builds net.Physical from what the reader collected, and checks
// that the flows of tracer channels balance at every balance node.
func (rd *reader) physical(net *graphpde.Network) error {
	ph := rd.ph
	if ph == nil || !ph.hasModel {
		return nil
	}
	fields := map[string][]string{}
	for _, m := range ph.models {
		f := modelField[m].field
		fields[f] = append(fields[f], m)
	}
	if len(fields) > 1 {
		var parts []string
		for f, ms := range fields {
			parts = append(parts, fmt.Sprintf("%s (%s)", f, strings.Join(ms, ", ")))
		}
		sort.Strings(parts)
		return &Error{File: rd.file, Msg: "the models describe different fields: " + strings.Join(parts, " and ") + "; one network has one field"}
	}
	mf := modelField[ph.models[0]]
	p := &graphpde.Physical{
		Model: strings.Join(ph.models, ", "), Field: mf.field, FieldUnit: mf.unit,
		Flux: mf.flux, FluxUnit: mf.fluxUnit, Source: mf.source, Loss: mf.loss,
		Edges: make([]graphpde.PhysicalEdge, len(net.Edges)),
	}
	switch mf.field {
	case "temperature":
		p.Hazard = true
		switch {
		case ph.celsius:
			p.ShowUnit, p.ShowOffset, p.ShowScale = "°C", 273.15, 1
		case ph.fahr:
			p.ShowUnit, p.ShowOffset, p.ShowScale = "°F", 459.67/1.8, 1/1.8
		}
	case "voltage":
		p.Hazard = true
	case "concentration":
		if ph.concDim != nil {
			p.FieldUnit = ph.concDim.Pretty()
			p.FluxUnit = ph.concDim.Mul(units.Dim{units.Length: 3, units.Time: -1}).Pretty()
			if u := ph.concUnit; u.Scale != 1 && u.Offset == 0 {
				p.ShowUnit, p.ShowScale = u.Text, u.Scale
			}
		}
	}
	for i, e := range net.Edges {
		if pe, ok := ph.edges[e.ID]; ok {
			p.Edges[i] = pe
		}
	}
	p.Nodes = make([]graphpde.PhysicalNode, len(net.Nodes))
	for i, nd := range net.Nodes {
		p.Nodes[i] = ph.nodes[nd.ID]
	}
	// Flow balance of the channels at balance nodes.
	if ph.models[0] == "channel" {
		in := make([]float64, len(net.Nodes))
		scale := make([]float64, len(net.Nodes))
		ends := make([]int, len(net.Nodes))
		for i, e := range net.Edges {
			q := p.Edges[i].Carry
			in[e.From] -= q
			in[e.To] += q
			scale[e.From] += math.Abs(q)
			scale[e.To] += math.Abs(q)
			ends[e.From]++
			ends[e.To]++
		}
		// An end of the network (one edge) is an inlet or outlet where water
		// enters or leaves at the node's concentration (no dispersive flux);
		// at a junction the flows must add up.
		for v, nd := range net.Nodes {
			if nd.Law.Kind == vertex.Balance && ends[v] > 1 && math.Abs(in[v]) > 1e-9*scale[v] {
				return &Error{File: rd.file, Line: rd.nodeLineOf(nd.ID), Object: fmt.Sprintf("node %q", nd.ID),
					Msg: fmt.Sprintf("the channel flows do not balance here (net inflow %.4g m^3/s): tracer mass would not be conserved; make the flows φ·A·v add up, or fix the node", in[v])}
			}
		}
	}
	net.Physical = p
	return nil
}
