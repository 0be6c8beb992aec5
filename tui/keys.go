package tui

import "github.com/charmbracelet/bubbles/key"

// keyMap holds every binding of the explorer, defined once; the help
// overlay and the short help line read them.
type keyMap struct {
	Left, Right, Up, Down    key.Binding
	PanLeft, PanRight        key.Binding
	PanUp, PanDown           key.Binding
	ZoomIn, ZoomOut          key.Binding
	Step, Run, Clear, Fan    key.Binding
	NextFixed, Table         key.Binding
	CrossX, CrossY           key.Binding
	Squeeze, Lines, Boundary key.Binding
	Scenarios, Params        key.Binding
	Export, Help, Quit, Back key.Binding
	Cancel                   key.Binding
	Thermo, Quantity, Map    key.Binding
}

func defaultKeyMap() keyMap {
	b := func(keys []string, k, h string) key.Binding {
		return key.NewBinding(key.WithKeys(keys...), key.WithHelp(k, h))
	}
	return keyMap{
		Left:      b([]string{"left", "h"}, "←/h", "cursor left"),
		Right:     b([]string{"right", "l"}, "→/l", "cursor right"),
		Up:        b([]string{"up", "k"}, "↑/k", "cursor up"),
		Down:      b([]string{"down", "j"}, "↓/j", "cursor down"),
		PanLeft:   b([]string{"H", "shift+left"}, "H", "pan left"),
		PanRight:  b([]string{"L", "shift+right"}, "L", "pan right"),
		PanUp:     b([]string{"K", "shift+up"}, "K", "pan up"),
		PanDown:   b([]string{"J", "shift+down"}, "J", "pan down"),
		ZoomIn:    b([]string{"+", "="}, "+", "zoom in"),
		ZoomOut:   b([]string{"-", "_"}, "-", "zoom out"),
		Step:      b([]string{" ", "n"}, "space/n", "one RG step"),
		Run:       b([]string{"r"}, "r", "run to convergence"),
		Clear:     b([]string{"c"}, "c", "clear the steps"),
		Fan:       b([]string{"f"}, "f", "fan of flow lines at the cursor"),
		NextFixed: b([]string{"tab"}, "tab", "next fixed point"),
		Table:     b([]string{"i"}, "i", "fixed-point table on/off"),
		CrossX:    b([]string{"x"}, "x", "transitions along x through the cursor"),
		CrossY:    b([]string{"y"}, "y", "transitions along y through the cursor"),
		Squeeze:   b([]string{"s"}, "s", "squeeze axes (tanh: see infinity)"),
		Lines:     b([]string{"v"}, "v", "flow lines on/off"),
		Boundary:  b([]string{"b"}, "b", "phase boundary on/off"),
		Scenarios: b([]string{"o"}, "o", "open a built-in scenario"),
		Params:    b([]string{"p"}, "p", "edit parameters"),
		Export:    b([]string{"w"}, "w", "write the view to .csv or .json"),
		Help:      b([]string{"?"}, "?", "help"),
		Quit:      b([]string{"q", "ctrl+c"}, "q", "quit"),
		Back:      b([]string{"esc"}, "esc", "back"),
		Cancel:    b([]string{"ctrl+x"}, "ctrl+x", "cancel the computation"),
		Thermo:    b([]string{"T"}, "T", "thermodynamics along x (on/off)"),
		Quantity:  b([]string{"Q"}, "Q", "next thermodynamic quantity"),
		Map:       b([]string{"M"}, "M", "map of a quantity over the slice (on/off)"),
	}
}

// ShortHelp implements help.KeyMap.
func (k keyMap) ShortHelp() []key.Binding {
	return []key.Binding{k.Step, k.Run, k.NextFixed, k.CrossX, k.Params, k.Help, k.Quit}
}

// FullHelp implements help.KeyMap.
func (k keyMap) FullHelp() [][]key.Binding {
	return [][]key.Binding{
		{k.Left, k.Right, k.Up, k.Down, k.PanLeft, k.PanRight, k.PanUp, k.PanDown, k.ZoomIn, k.ZoomOut},
		{k.Step, k.Run, k.Clear, k.Fan, k.NextFixed, k.Table, k.CrossX, k.CrossY},
		{k.Squeeze, k.Lines, k.Boundary, k.Thermo, k.Map, k.Quantity, k.Scenarios, k.Params, k.Export, k.Cancel, k.Help, k.Back, k.Quit},
	}
}
