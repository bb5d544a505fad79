// Package formula compiles the expressions of a network file (coefficients
// such as "k0*(1 + b*u)", edge equations such as "uxx + lambda*exp(u)", node
// laws such as "-(d.arm1 + d.arm2) + 0.1*u^4") into Go closures that return
// the value and the exact partial derivatives in u, ux and uxx.
//
// # Language
//
// An expression is built from numbers, the variables x (distance along the
// edge), u (the field), ux and uxx (its first and second derivatives along
// the edge), t (time), the derivatives d.EDGE of a node law (d["EDGE"] for
// ids that are not plain names), the names of a network's parameters, the
// binary operators plus, minus, times, divide and power (written ^ or **;
// right-associative, and above unary minus, so -2^2 is −4), unary minus,
// and the functions exp log sqrt abs sin cos tan tanh sinh cosh, pow(a, b),
// min(a, b, …) and max(a, b, …). Nothing else is accepted: no strings,
// comparisons, conditionals, loops or calls to anything outside this list.
// Which variables an expression may use is set by the caller (Spec.Vars);
// any other variable is an error naming it and its column.
//
// Expressions are parsed and type-checked by github.com/expr-lang/expr (its
// parser and checker only; its virtual machine is not used). The syntax tree
// is then compiled into a tree of closures over dual numbers (forward-mode
// automatic differentiation; Griewank & Walther, "Evaluating Derivatives",
// 2nd ed., SIAM 2008, ch. 3): every closure returns the value of its
// subexpression together with its partial derivatives in u, ux and uxx.
// Subexpressions without variables or parameters are folded into constants
// at compile time; parameters are read from the Params values at every
// evaluation, so a parameter sweep that changes a value is seen at once.
// Evaluation allocates nothing and is safe for concurrent use (the
// evaluations of one node law are serialised by a lock).
//
// # Derivatives at kinks and the edge of the domain
//
// abs has derivative 0 at 0; min and max take the derivatives of the first
// argument that attains the extreme value. Outside a function's domain (log
// or sqrt of a negative number, 0 to a negative power) the value is NaN or
// ±Inf, as in package math; the caller turns it into an error that names
// the place, and Expr.Explain names the subexpression that failed.
package formula
