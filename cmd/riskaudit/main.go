// Command riskaudit audits clinical risk models for a yes/no outcome: it
// fits recipes into frozen models, scores cohorts, and measures how a
// frozen model performs on a new cohort. The work is done by package
// audit; this command is its thin command line: flags, help, plans,
// exit statuses and the one-screen summaries.
//
// Exit status: 0 success; 1 an audit ran and a criterion failed
// (reserved for audits); 2 wrong usage; 3 bad input (a data file or a
// model spec); 4 the model cannot be fitted (separation, collinear
// terms, no convergence); 5 any other failure, such as an output that
// cannot be written; 130 or 143 interrupted by SIGINT (Ctrl-C) or
// SIGTERM, with nothing written.
package main

import (
	"context"
	"os"
	"os/signal"
	"syscall"
)

func main() {
	ctx, stop := interruptible(context.Background())
	code := run(ctx, os.Args[1:], newStreams(os.Stdout, os.Stderr))
	stop()
	os.Exit(code)
}

// interruptible returns a context cancelled, with an *interrupted cause,
// by the first SIGINT or SIGTERM; a second signal ends the process at
// once, as it would without the handler. stop releases the signals.
func interruptible(parent context.Context) (ctx context.Context, stop func()) {
	ctx, cancel := context.WithCancelCause(parent)
	sig := make(chan os.Signal, 1)
	signal.Notify(sig, os.Interrupt, syscall.SIGTERM)
	done := make(chan struct{})
	go func() {
		select {
		case s := <-sig:
			signal.Stop(sig)
			cancel(&interrupted{s.(syscall.Signal)})
		case <-done:
		}
	}()
	return ctx, func() {
		signal.Stop(sig)
		close(done)
		cancel(nil)
	}
}
