package graphpde

// Physical says what a network's numbers mean when a physical model (a
// heated wire or fin, a nerve cable, an RC line, a tracer channel) gave its
// coefficients. All values are in SI base units; a reader fills it in and
// the command line prints results with it. A nil *Physical means plain
// numbers in whatever consistent units the file used.
type Physical struct {
	// Model names the models used, e.g. "wire" or "cable, rc".
	Model string
	// Field and FieldUnit name u: "temperature", "K".
	Field, FieldUnit string
	// Flux and FluxUnit name the flux −a u' (and any carried flow): "heat
	// flow", "W".
	Flux, FluxUnit string
	// Show converts u for human output: shown = (u − ShowOffset)/ShowScale in
	// ShowUnit (e.g. °C: offset 273.15, scale 1). ShowScale 0 means no
	// conversion (u is shown in FieldUnit).
	ShowUnit              string
	ShowOffset, ShowScale float64
	// Hazard is true where results feed decisions about heat or electric
	// current that can hurt someone (wires, fins, RC lines).
	Hazard bool
	// Source and Loss name the distributed terms: "Joule heat", "heat to the
	// surroundings".
	Source, Loss string
	// Edges holds, per edge index, the physical split of the edge's decay
	// and source terms and any flow carried along it.
	Edges []PhysicalEdge
	// Nodes holds, per node index, the physical reading of a balance node's
	// leak and injection.
	Nodes []PhysicalNode
}

// PhysicalNode reads a node's β u − γ physically: a loss K·(u − Ref) (a
// convecting surface, a soma's membrane) when Set, or a Driver, a source
// behind a resistance that supplies γ − β u. The zero value means loss β u
// and source γ.
type PhysicalNode struct {
	K, Ref float64
	Set    bool
	Driver bool
}

// PhysicalEdge splits an edge's −c u + f into a physical loss
// K·(u − Ref) and a source (the rest), and gives the volumetric flow
// Carry that transports u along the edge (From → To): the total flux is
// then −a u' + Carry·u. A zero PhysicalEdge means loss c·u, source f,
// nothing carried.
type PhysicalEdge struct {
	K, Ref float64
	Carry  float64
	Set    bool // whether K and Ref were given (else loss c·u)
}

// Shown converts a field value for human output (see Physical.Show...).
func (p *Physical) Shown(u float64) float64 {
	if p == nil || p.ShowScale == 0 {
		return u
	}
	return (u - p.ShowOffset) / p.ShowScale
}

// ShownUnit is the unit of Shown values ("" for plain numbers).
func (p *Physical) ShownUnit() string {
	switch {
	case p == nil:
		return ""
	case p.ShowScale != 0:
		return p.ShowUnit
	}
	return p.FieldUnit
}
