package tui

import (
	"os"

	"github.com/charmbracelet/lipgloss"
)

// Styles are every style of the explorer, in one place.
type Styles struct {
	Title, Status, Panel, PanelTitle, Dim, Error, Caution lipgloss.Style
	Marks                                                 map[int]lipgloss.Style
}

// DefaultStyles returns the palette; with NO_COLOR set (or a monochrome
// terminal, which lipgloss detects) every style is plain or bold only.
func DefaultStyles() Styles {
	plain := os.Getenv("NO_COLOR") != ""
	c := func(s lipgloss.Style, col string) lipgloss.Style {
		if plain {
			return s
		}
		return s.Foreground(lipgloss.AdaptiveColor{Light: col, Dark: col})
	}
	s := Styles{
		Title:      c(lipgloss.NewStyle().Bold(true), "#2a6f97"),
		Status:     c(lipgloss.NewStyle(), "#6c757d"),
		Panel:      lipgloss.NewStyle().PaddingLeft(1),
		PanelTitle: c(lipgloss.NewStyle().Bold(true), "#2a6f97"),
		Dim:        c(lipgloss.NewStyle(), "#8d99ae"),
		Error:      c(lipgloss.NewStyle().Bold(true), "#c1121f"),
		Caution:    c(lipgloss.NewStyle().Bold(true), "#bc6c25"),
	}
	s.Marks = map[int]lipgloss.Style{
		styleFixed:    c(lipgloss.NewStyle().Bold(true), "#c1121f"),
		styleCursor:   c(lipgloss.NewStyle().Bold(true), "#2a9d8f"),
		styleTrail:    c(lipgloss.NewStyle(), "#e76f51"),
		styleBoundary: c(lipgloss.NewStyle(), "#6a4c93"),
		styleArrow:    c(lipgloss.NewStyle(), "#8d99ae"),
	}
	return s
}
