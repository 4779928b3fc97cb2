package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"os/signal"
	"syscall"
)

// Exit codes of the command.
const (
	exitOK        = 0
	exitError     = 1   // bad input or a failed run; nothing was written
	exitUsage     = 2   // unknown verb or flag
	exitThreshold = 3   // score: a quality threshold was not met
	exitInterrupt = 130 // Ctrl-C or SIGTERM; nothing was written
)

func main() {
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	code := run(ctx, os.Args[1:], os.Stdout, os.Stderr)
	stop()
	os.Exit(code)
}

// verbs maps each verb to its function. A verb parses its own flags.
var verbs = map[string]func(ctx context.Context, args []string, env *env) error{
	"cluster": clusterVerb,
	"label":   labelVerb,
	"profile": profileVerb,
	"score":   scoreVerb,
}

const usage = `batch clusters files that may not fit in memory.

usage:
  batch cluster -in FILE -columns A,B,... -k K -seed S -model MODEL.json [-memory 16MiB] [-method exact|minibatch]
  batch label   -model MODEL.json -in FILE -out LABELS.csv [-id COLUMN]
  batch profile -model MODEL.json -in FILE -labels LABELS.csv
  batch score   -in FILE -truth COLUMN -found COLUMN [-json] [-min-ari X] [-max-ci N]

Run "batch VERB -h" for the flags of a verb.
`

// env is what a verb writes to.
type env struct {
	stdout, stderr io.Writer
	terminal       bool // stderr is a terminal: draw progress bars
}

// errUsage marks a usage error (exit code 2); errThreshold a threshold not
// met (exit code 3).
var (
	errUsage     = errors.New("usage")
	errThreshold = errors.New("threshold not met")
)

// run executes one command line and returns the exit code.
func run(ctx context.Context, args []string, stdout, stderr io.Writer) int {
	e := &env{stdout: stdout, stderr: stderr, terminal: isTerminal(stderr)}
	if len(args) == 0 || args[0] == "-h" || args[0] == "-help" || args[0] == "help" {
		fmt.Fprint(stderr, usage)
		if len(args) == 0 {
			return exitUsage
		}
		return exitOK
	}
	verb, ok := verbs[args[0]]
	if !ok {
		fmt.Fprintf(stderr, "batch: unknown verb %q\n\n%s", args[0], usage)
		return exitUsage
	}
	err := verb(ctx, args[1:], e)
	switch {
	case err == nil:
		return exitOK
	case errors.Is(err, errHelp):
		return exitOK
	case errors.Is(err, errUsage):
		fmt.Fprintf(stderr, "batch %s: %v\n", args[0], err)
		return exitUsage
	case ctx.Err() != nil && errors.Is(err, ctx.Err()):
		fmt.Fprintf(stderr, "batch %s: interrupted; nothing was written\n", args[0])
		return exitInterrupt
	case errors.Is(err, errThreshold):
		fmt.Fprintf(stderr, "batch %s: %v\n", args[0], err)
		return exitThreshold
	}
	fmt.Fprintf(stderr, "batch %s: %v\n", args[0], err)
	return exitError
}
