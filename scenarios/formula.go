package scenarios

import (
	"errors"
	"fmt"
	"math"
	"sort"
	"strings"

	"github.com/expr-lang/expr"
	"github.com/expr-lang/expr/ast"
	"github.com/expr-lang/expr/parser"
	"github.com/expr-lang/expr/vm"
)

// The formula language: numbers, named symbols (couplings, parameters, pi),
// + − * / and powers (^ or **), parentheses, and the functions below.
// Nothing else is accepted (no comparisons, strings, member access or
// builtins), so a formula can do no I/O, reach nothing of the program, and
// evaluates in time bounded by its length.

type fn1 func(float64) float64

var functions1 = map[string]fn1{
	"exp": math.Exp, "log": math.Log, "log10": math.Log10, "log2": math.Log2, "sqrt": math.Sqrt,
	"abs": math.Abs, "sin": math.Sin, "cos": math.Cos, "tan": math.Tan,
	"asin": math.Asin, "acos": math.Acos, "atan": math.Atan,
	"sinh": math.Sinh, "cosh": math.Cosh, "tanh": math.Tanh,
	"asinh": math.Asinh, "acosh": math.Acosh, "atanh": math.Atanh,
	// logcosh(x) = ln cosh x, computed without overflow for large |x|.
	"logcosh": func(x float64) float64 {
		a := math.Abs(x)
		return a + math.Log1p(math.Exp(-2*a)) - math.Ln2
	},
	// log1pexp(x) = ln(1 + e^x), without overflow.
	"log1pexp": func(x float64) float64 {
		if x > 0 {
			return x + math.Log1p(math.Exp(-x))
		}
		return math.Log1p(math.Exp(x))
	},
}

var functions2 = map[string]func(float64, float64) float64{
	"pow": math.Pow, "atan2": math.Atan2,
}

// FunctionNames lists the functions a formula may call.
func FunctionNames() []string {
	var out []string
	for n := range functions1 {
		out = append(out, n)
	}
	for n := range functions2 {
		out = append(out, n)
	}
	sort.Strings(out)
	return out
}

// MaxFormulaLength bounds the length of a formula in bytes.
const MaxFormulaLength = 4096

// Formula is a compiled formula.
type Formula struct {
	Source  string
	symbols []string
	prog    *vm.Program
}

// FormulaError is a formula that does not compile: the message says what
// is wrong and, where the parser knows it, the column.
type FormulaError struct {
	Formula string
	Column  int // 1-based, 0 when unknown
	Msg     string
}

func (e *FormulaError) Error() string {
	if e.Column > 0 {
		return fmt.Sprintf("formula %q, column %d: %s", e.Formula, e.Column, e.Msg)
	}
	return fmt.Sprintf("formula %q: %s", e.Formula, e.Msg)
}

// ErrFormula is the class of formula errors.
var ErrFormula = errors.New("bad formula")

func (e *FormulaError) Unwrap() error { return ErrFormula }

// allowed checks the syntax tree against the formula language.
type allowed struct {
	symbols map[string]bool
	callees map[ast.Node]bool // identifiers that name a called function
	err     *FormulaError
	src     string
}

// floatLiterals makes every integer literal a float, so that arithmetic is
// in floating point throughout (no integer overflow or truncation).
type floatLiterals struct{}

func (floatLiterals) Visit(node *ast.Node) {
	if n, ok := (*node).(*ast.IntegerNode); ok {
		ast.Patch(node, &ast.FloatNode{Value: float64(n.Value)})
	}
}

// calleeFinder collects the identifiers in call position.
type calleeFinder map[ast.Node]bool

func (c calleeFinder) Visit(node *ast.Node) {
	if call, ok := (*node).(*ast.CallNode); ok {
		c[call.Callee] = true
	}
}

func (a *allowed) fail(n ast.Node, msg string) {
	if a.err == nil {
		a.err = &FormulaError{Formula: a.src, Column: n.Location().From + 1, Msg: msg}
	}
}

var allowedOps = map[string]bool{"+": true, "-": true, "*": true, "/": true, "^": true, "**": true}

func (a *allowed) Visit(node *ast.Node) {
	switch n := (*node).(type) {
	case *ast.IntegerNode, *ast.FloatNode:
	case *ast.IdentifierNode:
		if a.callees[n] {
			return // checked at the call
		}
		if !a.symbols[n.Value] {
			if _, ok := functions1[n.Value]; ok {
				return // a function name, checked at its call
			}
			if _, ok := functions2[n.Value]; ok {
				return
			}
			a.fail(n, fmt.Sprintf("unknown symbol %q; known here: %s", n.Value, strings.Join(sortedKeys(a.symbols), ", ")))
		}
	case *ast.UnaryNode:
		if n.Operator != "-" && n.Operator != "+" {
			a.fail(n, fmt.Sprintf("operator %q is not allowed; formulas use + - * / ^ only", n.Operator))
		}
	case *ast.BinaryNode:
		if !allowedOps[n.Operator] {
			a.fail(n, fmt.Sprintf("operator %q is not allowed; formulas use + - * / ^ only", n.Operator))
		}
	case *ast.CallNode:
		id, ok := n.Callee.(*ast.IdentifierNode)
		if !ok {
			a.fail(n, "only the listed functions may be called")
			return
		}
		if _, ok := functions1[id.Value]; ok {
			if len(n.Arguments) != 1 {
				a.fail(n, fmt.Sprintf("%s takes one argument", id.Value))
			}
			return
		}
		if _, ok := functions2[id.Value]; ok {
			if len(n.Arguments) != 2 {
				a.fail(n, fmt.Sprintf("%s takes two arguments", id.Value))
			}
			return
		}
		a.fail(n, fmt.Sprintf("unknown function %q; only the listed functions may be called: %s", id.Value, strings.Join(FunctionNames(), ", ")))
	case *ast.BuiltinNode:
		// The parser, run without the compiler's configuration, reads a
		// few of our function names (abs) as its own builtins; the
		// compiler, with builtins off, calls ours.
		if _, ok := functions1[n.Name]; ok {
			if len(n.Arguments) != 1 {
				a.fail(n, fmt.Sprintf("%s takes one argument", n.Name))
			}
			return
		}
		if _, ok := functions2[n.Name]; ok {
			if len(n.Arguments) != 2 {
				a.fail(n, fmt.Sprintf("%s takes two arguments", n.Name))
			}
			return
		}
		a.fail(n, fmt.Sprintf("unknown function %q; only the listed functions may be called: %s", n.Name, strings.Join(FunctionNames(), ", ")))
	default:
		a.fail(n, "only numbers, symbols, + - * / ^, parentheses and the listed functions are allowed")
	}
}

func sortedKeys(m map[string]bool) []string {
	var out []string
	for k := range m {
		out = append(out, k)
	}
	sort.Strings(out)
	return out
}

// CompileFormula compiles src over the given symbols (couplings,
// parameters; pi is always known).
func CompileFormula(src string, symbols []string) (*Formula, error) {
	if strings.TrimSpace(src) == "" {
		return nil, &FormulaError{Formula: src, Msg: "empty formula"}
	}
	if len(src) > MaxFormulaLength {
		return nil, &FormulaError{Formula: src[:40] + "...", Msg: fmt.Sprintf("longer than %d bytes", MaxFormulaLength)}
	}
	syms := map[string]bool{"pi": true}
	for _, s := range symbols {
		syms[s] = true
	}
	tree, err := parser.Parse(src)
	if err != nil {
		return nil, exprError(src, err)
	}
	callees := calleeFinder{}
	ast.Walk(&tree.Node, callees)
	chk := &allowed{symbols: syms, callees: callees, src: src}
	ast.Walk(&tree.Node, chk)
	if chk.err != nil {
		return nil, chk.err
	}
	env := map[string]any{}
	for s := range syms {
		env[s] = 0.0
	}
	opts := []expr.Option{expr.Env(env), expr.AsFloat64(), expr.DisableAllBuiltins(), expr.MaxNodes(2000), expr.Patch(floatLiterals{})}
	for name, f := range functions1 {
		f := f
		opts = append(opts, expr.Function(name, func(p ...any) (any, error) { return f(p[0].(float64)), nil }, new(func(float64) float64)))
	}
	for name, f := range functions2 {
		f := f
		opts = append(opts, expr.Function(name, func(p ...any) (any, error) { return f(p[0].(float64), p[1].(float64)), nil }, new(func(float64, float64) float64)))
	}
	prog, err := expr.Compile(src, opts...)
	if err != nil {
		return nil, exprError(src, err)
	}
	return &Formula{Source: src, symbols: symbols, prog: prog}, nil
}

func exprError(src string, err error) error {
	msg := err.Error()
	if strings.Contains(msg, "maximum allowed nodes") {
		short := src
		if len(short) > 60 {
			short = short[:60] + "..."
		}
		return &FormulaError{Formula: short, Msg: "the formula is too long (more than 2000 terms)"}
	}
	first := strings.SplitN(msg, "\n", 2)[0]
	col := 0
	// The library appends "(line:column)" to its first line.
	if i := strings.LastIndex(first, "("); i >= 0 && strings.HasSuffix(first, ")") {
		var line, c int
		if _, e := fmt.Sscanf(first[i:], "(%d:%d)", &line, &c); e == nil {
			col = c + 1
			first = strings.TrimSpace(first[:i])
		}
	}
	return &FormulaError{Formula: src, Column: col, Msg: first}
}

// Eval evaluates the formula with env holding every symbol as float64 (pi
// included). It uses the VM v, which must not be shared between goroutines.
func (f *Formula) Eval(v *vm.VM, env map[string]any) (float64, error) {
	out, err := v.Run(f.prog, env)
	if err != nil {
		return math.NaN(), err
	}
	x, ok := out.(float64)
	if !ok {
		return math.NaN(), fmt.Errorf("formula %q did not give a number", f.Source)
	}
	return x, nil
}
