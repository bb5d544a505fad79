// Package netfile reads and writes the network file, a TOML document that
// describes a network of thin conductors, and imports networks from CSV edge
// lists. Read, ReadCSV and ReadFile return a *graphpde.Network built with
// AddNode and AddEdge; Write writes a network as a file that Read reads back
// to the same network.
//
// Every error is an *Error: one line naming the file, the line of the
// offending key (the table's header line when a required key is missing),
// the node or edge, and what is wrong:
//
//	net.toml:23: edge "arm1": length = -1 must be a finite number > 0
//	net.toml:7: node "hub": unknown key "lek" (did you mean "leak"?)
//
// # The network file
//
// The file is TOML 1.0 (https://toml.io/en/v1.0.0). Numbers are SI unless
// stated otherwise. Where a number is expected an integer is accepted
// (length = 1); nan and inf are rejected wherever a value must be finite,
// which is everywhere. A number may also be written as a string "NUMBER
// UNIT" ("25 mm", "20 degC"; package units), converted to SI base units;
// length must then be a length. A key this package does not know is an error, with
// its line, as is a value of the wrong type. An empty file, and a file with
// nodes but no edges, are read as they are (a solver will refuse them).
// An id is a non-empty string of ASCII letters, digits, '_', '-' and '.'
// (graphpde.ValidID); node ids and edge ids are two separate name spaces,
// each without duplicates.
//
// Top level: only the tables below; any other key or table is an error.
//
// [network] (optional):
//
//	name         string   free text; default ""
//	description  string   free text; default ""
//
// [defaults] (optional): a default for every edge key except id, from and
// to. An edge's own value overrides the default; an edge's weight overrides
// a default weights and the other way round. The values are checked as edge
// values, and errors name [defaults] and the line there.
//
// [[node]] (one table per node, in the order they get their indices):
//
//	id        string           required
//	xy        [x, y] numbers   optional position for drawings; finite
//	fixed     number           prescribed value g (Dirichlet); finite.
//	                           A node with fixed is a fixed node; it must not
//	                           have leak, inject, capacity or split.
//	leak      number ≥ 0       β; default 0
//	inject    number           γ; default 0
//	capacity  number ≥ 0       ρ_v, node storage; default 0
//	split     table            {edge-id = p, ...}: walker-only splitting
//	                           probabilities at equal physical radius,
//	                           overriding those the weights imply. Every key
//	                           must be an edge incident to this node; each
//	                           p ≥ 0 and finite, their sum > 0. The values
//	                           are normalised to sum to one; an incident edge
//	                           not listed gets probability 0. The PDE ignores
//	                           split. A self-loop's share is divided equally
//	                           between its two ends (graphpde.NodeSplit).
//
// A node without fixed is a balance node,
//
//	Σ_e J_e + β u + ρ_v ∂_t u = γ,   J_e = −α_e ∂_e u,
//
// with J_e the flux leaving the node into edge e.
//
// [[edge]] (one table per edge):
//
//	id           string           required
//	from         string           required: id of a node
//	to           string           required: id of a node (may equal from)
//	length       number > 0       L; required (here or in [defaults])
//	diffusivity  number > 0       a; required (here or in [defaults])
//	drift        number           b, along from → to; default 0
//	decay        number ≥ 0       c; default 0
//	source       number           f; default 0
//	capacity     number > 0       ρ, per length; default 1
//	weight       number > 0       α at both ends; default: the diffusivity
//	weights      [from, to] > 0   α at each end; not together with weight
//	cells        integer ≥ 1      grid cells when a grid element is used;
//	                              default: the solver's choice. An integral
//	                              float (64.0) is accepted.
//
// on which ρ ∂_t u = ∂_x(a ∂_x u) + b ∂_x u − c u + f, x measured from the
// from node. A weight of 0 is an error (graphpde stores 0 to mean "default";
// leave the key out for the default).
//
// Size guard: a file is refused, with an error naming the edge, before
// anything proportional to the grid is allocated, if one edge asks for more
// than MaxCellsPerEdge (10^8) cells or if the cells of all edges together,
// at BytesPerCell (64) bytes each, exceed MemoryLimit (16 GiB, 2^28 cells).
//
// # Parameters and expressions
//
// [parameters] (optional): named numbers, name = number (or a quantity).
// Names are ASCII letters, digits and '_', not starting with a digit, and
// not a variable or function of the expressions (formula.Reserved). They
// become Network.Params, which compiled laws read at every evaluation.
//
// Where a coefficient may vary, its value may be a string holding an
// expression (package formula; a string that is a quantity "NUMBER UNIT" is
// a number instead). Each key may use these variables besides parameters:
//
//	edge diffusivity, drift, decay, source   x, u, t
//	edge capacity                            x, t
//	edge equation                            x, u, ux, uxx
//	edge initial                             x
//	node fixed, inject                       t
//	node loss                                u
//	node law                                 u, d.EDGE
//	node initial                             (parameters only)
//
// Any other variable is an error naming the line, the key, the variable
// and its column; the cause is a *formula.Error. An expression without
// variables or parameters is stored as the number it evaluates to, and is
// checked like one. Otherwise:
//
//   - an edge coefficient in u or t becomes a graphpde.Coef in Edge.Law
//     (plain field 0); one in x (and parameters) becomes an Edge.Profile
//     function, which every linear engine reads, checked at 65 points along
//     the edge; one in parameters only becomes a Coef in Edge.Law with its
//     current value in the plain field;
//   - equation (an expression, never a number) becomes Edge.Law.Equation,
//     E(x, u, ux, uxx) = 0 in generator sign. It replaces diffusivity,
//     drift, decay and source: giving one of them on the same edge is an
//     error, and their [defaults] do not apply. The edge must give weight
//     or weights;
//   - initial (number or expression) becomes Edge.Law.Initial;
//   - node fixed and inject in t or parameters set Node.Time, with the
//     value at t = 0 in the node's law;
//   - loss = "..." (u) on a balance node makes Σ_e J_e + loss(u) = 0
//     (Node.Nonlinear.Loss); it excludes leak, inject and law, and a fixed
//     node. A constant loss is stored as inject = −loss;
//   - law = "..." on a balance node is a general law G(u, d_1…d_k) = 0 with
//     d.EDGE the derivative leaving the node along EDGE (d["EDGE"] for ids
//     with '-' or '.'; d.EDGE.from and d.EDGE.to for the two ends of a
//     self-loop), compiled once the edges are known
//     (Node.Nonlinear.General, in Network.Incident order); it excludes leak,
//     inject and loss, and a fixed node;
//   - node initial (number or parameters) becomes Node.Initial.
//
// Laws in u are checked by the solvers where they evaluate them.
//
// # CSV edge lists
//
// ReadCSV reads large networks from CSV (RFC 4180: comma separated, fields
// may be quoted; lines starting with '#' are comments; a UTF-8 byte-order
// mark is ignored). The first record is a header naming the columns, in any
// order, case-insensitive; every row has as many fields as the header.
// Fields are trimmed of spaces; an empty field means the default.
//
//	kind         "edge" or "node"; optional column: without it every row
//	             is an edge. An empty kind is an edge.
//	id           edge or node id (required on every row)
//	from, to     node ids (edge rows; required)
//	length       L > 0 (edge rows; required)
//	diffusivity  a > 0 (edge rows; required)
//	drift        b (edge rows; default 0)
//	decay        c ≥ 0 (edge rows; default 0)
//	source       f (edge rows; default 0)
//	capacity     ρ > 0 on edge rows (default 1); ρ_v ≥ 0 on node rows
//	             (default 0)
//	weight       α at both ends > 0 (edge rows; default the diffusivity)
//	weight_from  α at the from end > 0 (edge rows; not with weight)
//	weight_to    α at the to end > 0 (edge rows; not with weight)
//	cells        integer 1..10^8 (edge rows; default the solver's)
//	fixed        g: makes the node fixed (node rows; then leak, inject and
//	             capacity must be empty)
//	leak         β ≥ 0 (node rows; default 0)
//	inject       γ (node rows; default 0)
//	x, y         position (node rows; both or neither)
//
// The columns id, from, to, length and diffusivity must be in the header;
// the node-only columns (fixed, leak, inject, x, y) need a kind column. A
// field of a column that the row's kind does not use must be empty. Nodes
// are created in order of first appearance, as balance nodes without leak,
// injection or capacity, whether they first appear in an edge row or in a
// node row; a node row, before or after the edges that use the node, sets
// its condition, at most once per node. Splits, [defaults] and the network
// name have no CSV form. Errors carry the line of the row. The reader
// streams: it holds one record at a time besides the network it builds, and
// its cost is linear in the number of rows.
//
// The TOML format is specified by T. Preston-Werner et al., TOML v1.0.0
// (2021), and parsed by github.com/BurntSushi/toml; CSV by RFC 4180 (2005)
// as read by encoding/csv.
//
// # Physical models
//
// An edge may give one model sub-table instead of the raw coefficients:
// wire (conductivity, diameter or area and perimeter, film, ambient, current,
// resistivity, resistivity_slope, resistivity_at, density, heat_capacity),
// cable (diameter, axial_resistivity, membrane_resistance,
// membrane_capacitance, resting), rc (resistance, capacitance, leakage) or
// channel (area, porosity, velocity, dispersion or dispersivity and
// diffusion, decay or half_life, retardation). A balance node may carry the
// elements convection, driver, soma and load. The reader maps them to the
// raw coefficients (the formulas and their sources are on wireModel,
// cableModel, channelModel and nodeElement) and sets Network.Physical, which
// names the field and flux and splits the terms physically.
package netfile
