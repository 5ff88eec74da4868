//go:build unix

package plugin

import (
	"os/exec"
	"syscall"
)

// ownProcessGroup starts the command in a new process group whose id is its
// pid, so that killProcessGroup reaches everything it spawns.
func ownProcessGroup(cmd *exec.Cmd) {
	cmd.SysProcAttr = &syscall.SysProcAttr{Setpgid: true}
}

// killProcessGroup sends SIGKILL to every process left in the group.
func killProcessGroup(pgid int) {
	_ = syscall.Kill(-pgid, syscall.SIGKILL)
}
