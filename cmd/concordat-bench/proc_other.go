//go:build !unix

package main

import (
	"os"
	"os/exec"
)

// ownProcessGroup does nothing here: without process groups, cancelling
// kills the direct child only.
func ownProcessGroup(cmd *exec.Cmd) {}

// childMaxRSS is unknown here.
func childMaxRSS(ps *os.ProcessState) int64 { return 0 }
