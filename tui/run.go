package tui

import (
	"errors"
	"fmt"
	"io"

	tea "github.com/charmbracelet/bubbletea"
)

// Run opens the explorer full screen on in/out until the user quits. A
// panic inside the program restores the terminal and comes back as an
// error.
func Run(o Options, in io.Reader, out io.Writer) error {
	m, err := New(o)
	if err != nil {
		return err
	}
	p := tea.NewProgram(m, tea.WithAltScreen(), tea.WithMouseCellMotion(), tea.WithInput(in), tea.WithOutput(out))
	_, err = p.Run()
	if errors.Is(err, tea.ErrProgramPanic) {
		return fmt.Errorf("the explorer stopped on an internal error (the terminal was restored): %v", err)
	}
	return err
}
