//go:build unix

package main

import (
	"os"
	"os/exec"
	"syscall"
)

// ownProcessGroup starts cmd in a process group of its own and makes
// cancelling it kill the whole group (GNU time and the command under it).
func ownProcessGroup(cmd *exec.Cmd) {
	cmd.SysProcAttr = &syscall.SysProcAttr{Setpgid: true}
	cmd.Cancel = func() error { return syscall.Kill(-cmd.Process.Pid, syscall.SIGKILL) }
}

// childMaxRSS is the peak resident set size of a finished child, in bytes,
// from its rusage (Linux reports ru_maxrss in KiB); 0 when unknown.
func childMaxRSS(ps *os.ProcessState) int64 {
	if ps == nil {
		return 0
	}
	if ru, ok := ps.SysUsage().(*syscall.Rusage); ok {
		return int64(ru.Maxrss) * 1024
	}
	return 0
}
