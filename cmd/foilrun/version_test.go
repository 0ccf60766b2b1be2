package main

import (
	"strings"
	"testing"
)

func TestVersionAndCompletion(t *testing.T) {
	t.Parallel()
	code, out, _ := runCLI(t, "version")
	if code != 0 || !strings.HasPrefix(out, "foilrun ") {
		t.Errorf("version: exit %d, %q", code, out)
	}
	for _, shell := range []string{"bash", "zsh", "fish"} {
		code, out, e := runCLI(t, "completion", shell)
		if code != 0 || !strings.Contains(out, "foilrun") {
			t.Errorf("completion %s: exit %d, %d bytes, %s", shell, code, len(out), e)
		}
	}
}
