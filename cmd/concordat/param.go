package main

import (
	"fmt"
	"io"

	"github.com/spf13/pflag"

	"concordat/recipe"
)

// paramFlag adds --param to a command: repeatable name=value overrides of
// the recipe's param blocks.
func paramFlag(fs *pflag.FlagSet) *[]string {
	return fs.StringArray("param", nil, "set a recipe parameter, `name=value`, in place of its default (repeatable); the ledger records it")
}

// overrides parses the --param values, printing a usage error for a
// malformed one; ok is false then.
func overrides(c *command, args []string, stderr io.Writer) (out []recipe.Override, ok bool) {
	for _, a := range args {
		o, err := recipe.ParseOverride(a)
		if err != nil {
			fmt.Fprintf(stderr, "concordat: error: %v\n", err)
			c.usage(stderr)
			return nil, false
		}
		out = append(out, o)
	}
	return out, true
}
