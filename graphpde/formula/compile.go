package formula

import (
	"errors"
	"fmt"
	"slices"
	"strconv"
	"strings"

	"github.com/expr-lang/expr"
	"github.com/expr-lang/expr/ast"
	"github.com/expr-lang/expr/builtin"
	"github.com/expr-lang/expr/checker"
	"github.com/expr-lang/expr/conf"
	"github.com/expr-lang/expr/file"
	"github.com/expr-lang/expr/parser"
)

// Error is a compile error of an expression. Error() gives one line, e.g.
//
//	column 7: variable ux is not allowed here (allowed: x, u, t and the parameters k0, b)
type Error struct {
	Src    string
	Column int    // 1-based column (in characters) of the offending token; 0 if unknown
	Token  string // the offending token or name, if any
	Var    Var    // the variable that is not allowed, if that is the error
	Msg    string
}

func (e *Error) Error() string {
	if e.Column > 0 {
		return "column " + strconv.Itoa(e.Column) + ": " + e.Msg
	}
	return e.Msg
}

// functionArity holds the functions an expression may call, with their
// number of arguments (-2: two or more).
var functionArity = map[string]int{
	"exp": 1, "log": 1, "sqrt": 1, "abs": 1, "sin": 1, "cos": 1, "tan": 1,
	"tanh": 1, "sinh": 1, "cosh": 1, "pow": 2, "min": -2, "max": -2,
}

// Functions returns the names of the functions an expression may call, sorted.
func Functions() []string {
	names := make([]string, 0, len(functionArity))
	for n := range functionArity {
		names = append(names, n)
	}
	slices.Sort(names)
	return names
}

// Reserved reports whether name cannot be a parameter name: a variable, a
// function, or a word of the expression language.
func Reserved(name string) bool {
	if slices.Contains(varNames[:], name) {
		return true
	}
	if _, ok := functionArity[name]; ok {
		return true
	}
	switch name {
	case "true", "false", "nil", "not", "and", "or", "in", "matches", "contains",
		"startsWith", "endsWith", "let", "if", "else", "len", "map", "filter", "all",
		"any", "none", "one", "count", "sum", "find", "findIndex", "findLast",
		"findLastIndex", "groupBy", "sortBy", "reduce", "ceil", "floor", "round", "int", "float":
		return true
	}
	_, builtinName := builtin.Index[name]
	return builtinName
}

// Compile parses, checks and compiles src. The error is an *Error.
// The cost is linear in the length of src.
func Compile(src string, spec Spec) (*Expr, error) {
	if strings.TrimSpace(src) == "" {
		return nil, &Error{Src: src, Msg: "empty expression"}
	}
	cfg := config(spec)
	tree, err := parser.ParseWithConfig(src, cfg)
	if err != nil {
		return nil, fromExpr(src, err)
	}
	c := &compiler{src: src, spec: spec}
	if spec.Vars&D != 0 {
		c.law = &lawState{dir: -1}
	}
	root, err := c.node(tree.Node)
	if err != nil {
		return nil, err
	}
	// The syntax is within our language; let the library check the types
	// as well (every name is a float64, every function float64 → float64).
	if _, err := checker.Check(tree, cfg); err != nil {
		return nil, fromExpr(src, err)
	}
	if root.konst && !Finite(root.c) {
		return nil, &Error{Src: src, Msg: fmt.Sprintf("the expression evaluates to %g", root.c)}
	}
	e := &Expr{src: src, spec: spec, uses: root.uses, params: root.params, root: root, law: c.law}
	return e, nil
}

// config declares the variables, parameters and functions to the library's
// parser and checker, with all of its own builtins switched off.
func config(spec Spec) *conf.Config {
	env := map[string]any{}
	for i, n := range varNames[:5] {
		if spec.Vars&(1<<i) != 0 {
			env[n] = 0.0
		}
	}
	if spec.Params != nil {
		for _, n := range spec.Params.Names {
			env[n] = 0.0
		}
	}
	if spec.Vars&D != 0 {
		// Our compiler resolves d.EDGE (including d.EDGE.from of a
		// self-loop); the checker sees values of unknown type there.
		env["d"] = map[string]any{}
	}
	cfg := conf.CreateNew()
	expr.Env(env)(cfg)
	expr.DisableAllBuiltins()(cfg)
	cfg.Optimize = false
	noop := func(...any) (any, error) { return nil, errors.New("formula: not evaluated by the library") }
	for name, n := range functionArity {
		var typ any
		switch n {
		case 1:
			typ = new(func(float64) float64)
		case 2:
			typ = new(func(float64, float64) float64)
		default:
			typ = new(func(float64, ...float64) float64)
		}
		expr.Function(name, noop, typ)(cfg)
	}
	return cfg
}

// fromExpr converts an error of the library into an *Error.
func fromExpr(src string, err error) *Error {
	var fe *file.Error
	if errors.As(err, &fe) {
		e := &Error{Src: src, Column: fe.From + 1, Msg: fe.Message}
		r := []rune(src)
		if strings.Contains(fe.Message, "EOF") {
			// The library places the end of input on the last character.
			e.Column = len(r) + 1
			e.Msg = "the expression ends too early (" + fe.Message + ")"
			return e
		}
		if fe.From >= 0 && fe.From < len(r) {
			e.Token = string(r[fe.From:min(fe.To, len(r))])
		}
		return e
	}
	return &Error{Src: src, Msg: err.Error()}
}

type compiler struct {
	src  string
	spec Spec
	law  *lawState // where d.EDGE leaves read (Spec.Vars has D)
}

func (c *compiler) fail(n ast.Node, token, msg string) *Error {
	return &Error{Src: c.src, Column: n.Location().From + 1, Token: token, Msg: msg}
}

// allowed describes what the expression may use, for messages.
func (c *compiler) allowed() string {
	var parts []string
	for i, n := range varNames[:5] {
		if c.spec.Vars&(1<<i) != 0 {
			parts = append(parts, n)
		}
	}
	if c.spec.Vars&D != 0 {
		parts = append(parts, "d.EDGE")
	}
	s := strings.Join(parts, ", ")
	if c.spec.Params != nil && len(c.spec.Params.Names) > 0 {
		if s != "" {
			s += " and "
		}
		s += "the parameters " + strings.Join(c.spec.Params.Names, ", ")
	}
	if s == "" {
		return "only numbers"
	}
	return s
}

// leaf makes a non-constant leaf.
func leaf(f fn, uses Var, text string, col int) *cnode {
	return &cnode{f: f, uses: uses, text: text, col: col}
}

func (c *compiler) node(n ast.Node) (*cnode, error) {
	col := n.Location().From + 1
	switch n := n.(type) {
	case *ast.IntegerNode:
		return constant(float64(n.Value), n.String(), col), nil
	case *ast.FloatNode:
		return constant(n.Value, n.String(), col), nil
	case *ast.IdentifierNode:
		return c.ident(n)
	case *ast.MemberNode:
		return c.member(n)
	case *ast.UnaryNode:
		switch n.Operator {
		case "-":
			a, err := c.node(n.Node)
			if err != nil {
				return nil, err
			}
			return c.combine(n, []*cnode{a}, func() fn { return neg(a) })
		case "+":
			return c.node(n.Node)
		}
		return nil, c.fail(n, n.Operator, fmt.Sprintf("operator %q is not allowed (the operators are + - * / ^)", n.Operator))
	case *ast.BinaryNode:
		var op func(a, b *cnode) fn
		switch n.Operator {
		case "+":
			op = add
		case "-":
			op = sub
		case "*":
			op = mul
		case "/":
			op = div
		case "^", "**":
			op = pow
		default:
			return nil, c.fail(n, n.Operator, fmt.Sprintf("operator %q is not allowed (the operators are + - * / ^)", n.Operator))
		}
		a, err := c.node(n.Left)
		if err != nil {
			return nil, err
		}
		b, err := c.node(n.Right)
		if err != nil {
			return nil, err
		}
		return c.combine(n, []*cnode{a, b}, func() fn { return op(a, b) })
	case *ast.CallNode:
		return c.call(n)
	case *ast.BuiltinNode:
		return nil, c.fail(n, n.Name, fmt.Sprintf("unknown function %q (the functions are %s)", n.Name, strings.Join(Functions(), " ")))
	case *ast.StringNode:
		return nil, c.fail(n, n.Value, "strings are not allowed in an expression")
	case *ast.BoolNode:
		return nil, c.fail(n, n.String(), "true and false are not allowed in an expression")
	case *ast.ConditionalNode:
		return nil, c.fail(n, "?", "conditionals are not allowed in an expression (use min, max or abs)")
	}
	return nil, c.fail(n, n.String(), fmt.Sprintf("%q is not allowed in an expression (numbers, variables, parameters, + - * / ^ and the functions %s only)", n.String(), strings.Join(Functions(), " ")))
}

func constant(v float64, text string, col int) *cnode {
	return &cnode{konst: true, c: v, f: func(point) Dual { return Dual{V: v} }, text: text, col: col}
}

// combine builds the node of an operation on kids, folding it to a constant
// when every kid is one.
func (c *compiler) combine(n ast.Node, kids []*cnode, build func() fn) (*cnode, error) {
	out := &cnode{f: build(), text: n.String(), col: n.Location().From + 1, kids: kids}
	allConst := true
	for _, k := range kids {
		out.uses |= k.uses
		for _, i := range k.params {
			if !slices.Contains(out.params, i) {
				out.params = append(out.params, i)
			}
		}
		allConst = allConst && k.konst
	}
	if allConst {
		v := out.f(point{}).V
		out.konst, out.c = true, v
		out.f = func(point) Dual { return Dual{V: v} }
	}
	return out, nil
}

func (c *compiler) ident(n *ast.IdentifierNode) (*cnode, error) {
	name := n.Value
	col := n.Location().From + 1
	if i := slices.Index(varNames[:], name); i >= 0 {
		v := Var(1 << i)
		if c.spec.Vars&v == 0 {
			e := c.fail(n, name, fmt.Sprintf("variable %s is not allowed here (allowed: %s)", name, c.allowed()))
			e.Var = v
			return nil, e
		}
		switch v {
		case X:
			return leaf(leafX, X, name, col), nil
		case U:
			l := leaf(leafU, U, name, col)
			l.isU = true
			return l, nil
		case UX:
			return leaf(leafUX, UX, name, col), nil
		case UXX:
			return leaf(leafUXX, UXX, name, col), nil
		case T:
			return leaf(leafT, T, name, col), nil
		case D:
			return nil, c.fail(n, name, "write d.EDGE (or d[\"EDGE\"]) for the derivative leaving the node along edge EDGE")
		}
	}
	if p := c.spec.Params; p != nil {
		if i := p.Index(name); i >= 0 {
			l := leaf(leafParam(&p.Values, i), 0, name, col)
			l.params = []int{i}
			l.pv, l.pi = &p.Values, i
			return l, nil
		}
	}
	if _, ok := functionArity[name]; ok {
		return nil, c.fail(n, name, fmt.Sprintf("%s is a function: write %s(...)", name, name))
	}
	msg := fmt.Sprintf("unknown name %q (allowed: %s)", name, c.allowed())
	return nil, c.fail(n, name, msg)
}

// member compiles d.EDGE, d["EDGE"] and d.EDGE.from / d.EDGE.to.
func (c *compiler) member(n *ast.MemberNode) (*cnode, error) {
	var parts []string
	var m ast.Node = n
	for {
		mn, ok := m.(*ast.MemberNode)
		if !ok {
			break
		}
		s, ok := mn.Property.(*ast.StringNode)
		if !ok || mn.Optional || mn.Method {
			return nil, c.fail(mn, mn.String(), fmt.Sprintf("%q is not allowed: name an edge as d.EDGE or d[\"EDGE\"]", mn.String()))
		}
		parts = append(parts, s.Value)
		m = mn.Node
	}
	id, ok := m.(*ast.IdentifierNode)
	if !ok || id.Value != "d" {
		return nil, c.fail(n, n.String(), fmt.Sprintf("%q is not allowed: the only names with a dot are d.EDGE, the derivatives of a node law", n.String()))
	}
	if c.spec.Vars&D == 0 {
		e := c.fail(n, n.String(), fmt.Sprintf("%s is not allowed here: the derivatives d.EDGE belong to a node law (allowed: %s)", n.String(), c.allowed()))
		e.Var = D
		return nil, e
	}
	slices.Reverse(parts)
	name := strings.Join(parts, ".")
	j := slices.Index(c.spec.Ends, name)
	if j < 0 {
		return nil, c.fail(n, name, fmt.Sprintf("d.%s: no edge %q meets this node (its edges: %s)", name, name, strings.Join(c.spec.Ends, ", ")))
	}
	return leaf(leafD(c.law, j), D, "d."+name, n.Location().From+1), nil
}

func (c *compiler) call(n *ast.CallNode) (*cnode, error) {
	id, ok := n.Callee.(*ast.IdentifierNode)
	if !ok {
		return nil, c.fail(n, n.String(), fmt.Sprintf("%q is not allowed: call one of the functions %s", n.String(), strings.Join(Functions(), " ")))
	}
	name := id.Value
	arity, ok := functionArity[name]
	if !ok {
		return nil, c.fail(n, name, fmt.Sprintf("unknown function %q (the functions are %s)", name, strings.Join(Functions(), " ")))
	}
	switch {
	case arity > 0 && len(n.Arguments) != arity:
		s := "s"
		if arity == 1 {
			s = ""
		}
		return nil, c.fail(n, name, fmt.Sprintf("%s takes %d argument%s, not %d", name, arity, s, len(n.Arguments)))
	case arity == -2 && len(n.Arguments) < 2:
		return nil, c.fail(n, name, fmt.Sprintf("%s takes two or more arguments, not %d", name, len(n.Arguments)))
	}
	args := make([]*cnode, len(n.Arguments))
	for i, a := range n.Arguments {
		var err error
		if args[i], err = c.node(a); err != nil {
			return nil, err
		}
	}
	switch name {
	case "pow":
		return c.combine(n, args, func() fn { return pow(args[0], args[1]) })
	case "min", "max":
		// Fold left: min(a, b, c) = min(min(a, b), c).
		acc := args[0]
		for _, b := range args[1:] {
			a, b := acc, b
			var err error
			acc, err = c.combine(n, []*cnode{a, b}, func() fn { return extreme(a, b, name == "min") })
			if err != nil {
				return nil, err
			}
		}
		return acc, nil
	}
	u := unaries[name]
	return c.combine(n, args, func() fn { return apply(u, args[0]) })
}
