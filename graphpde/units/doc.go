// Package units reads physical quantities written as "NUMBER UNIT" — "0.5
// mm", "20 degC", "3 ohm/m", "1.2 W/(m*K)", "1 uF/cm^2" — checks their
// dimension and converts them to SI base units.
//
// A dimension is a vector of integer exponents of the seven SI base units
// (Dim). A unit expression is built from symbols with optional SI prefixes
// (k, M, m, u or µ, n, ...), products ("*", "·" or a space), quotients ("/"),
// parentheses and integer powers ("^2", "^-1", "m2", "²"). The table holds
// the SI units, the units accepted for use with the SI (min, h, d, L, bar)
// and a few inch-pound units (in, ft, mil, circular mil, lb, lbf, psi, atm,
// Btu, cal, hp, gal); their factors are those of NIST Special Publication
// 811, Guide for the Use of the International System of Units (SI), 2008
// edition, Appendix B.8, and the tests check composite conversions against
// that appendix's table.
//
// Temperatures with an offset (degC, °C, degF, °F) are affine. Alone they
// are read as absolute readings (20 degC is 293.15 K; Convert, ToSI) or, on
// request, as differences (ConvertDelta, DeltaToSI: 20 degC is 20 K).
// Inside a compound unit they are always differences, so W/(m*degC) equals
// W/(m*K) (SP 811 §4.2.1.1).
//
// The package keeps its own small table rather than a units library:
// gonum's unit package represents dimensions but has no parser and no affine
// temperatures, and the network file needs both.
package units
