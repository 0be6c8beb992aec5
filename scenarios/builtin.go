package scenarios

import (
	"embed"
	"sort"
	"strings"
)

//go:embed builtin/*.toml
var builtinFS embed.FS

// DefaultScenario is the built-in scenario scalewalk opens by default.
const DefaultScenario = "monolayer"

// BuiltinNames lists the built-in scenarios.
func BuiltinNames() []string {
	ents, _ := builtinFS.ReadDir("builtin")
	var out []string
	for _, e := range ents {
		out = append(out, strings.TrimSuffix(e.Name(), ".toml"))
	}
	sort.Strings(out)
	return out
}

func builtinText(name string) ([]byte, bool) {
	b, err := builtinFS.ReadFile("builtin/" + name + ".toml")
	return b, err == nil
}

// BuiltinText returns a built-in scenario as commented TOML.
func BuiltinText(name string) ([]byte, bool) { return builtinText(name) }
