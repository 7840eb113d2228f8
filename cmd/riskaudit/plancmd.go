package main

import (
	"fmt"

	"github.com/spf13/cobra"

	"github.com/riskaudit/riskaudit/internal/atomicfile"
	"github.com/riskaudit/riskaudit/plan"
)

func newPlanCmd(s *streams) *cobra.Command {
	c := &cobra.Command{
		Use:   "plan",
		Short: "Write and check audit plans",
		Long: `An audit plan is a YAML file naming everything a scheduled audit needs:
the model, the development data and cohort, the outcome mapping, column
renames, subgroups, acceptance criteria, bootstrap settings, the output
folder and the history store. 'riskaudit audit --plan FILE' runs it; flags
on the command line override it.`,
	}
	var out string
	var force bool
	initCmd := &cobra.Command{
		Use:   "init --out plan.yaml",
		Short: "Write a commented starter plan",
		Example: `  riskaudit plan init --out monthly-audit.yaml
  riskaudit audit --plan monthly-audit.yaml`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			if err := atomicfile.CheckTarget(out, false); err != nil {
				return err
			}
			if !force && exists(out) {
				return usagef("%s exists; choose another name or add --force", out)
			}
			if err := atomicfile.WriteFile(out, []byte(plan.Starter)); err != nil {
				return err
			}
			fmt.Fprintf(s.out, "Wrote %s: edit the paths and criteria, then run riskaudit audit --plan %s\n", out, shellQuote(out))
			return nil
		},
	}
	initCmd.Flags().StringVar(&out, "out", "audit-plan.yaml", "where to write the plan")
	initCmd.Flags().BoolVar(&force, "force", false, "overwrite an existing file")
	checkCmd := &cobra.Command{
		Use:     "check PLAN",
		Short:   "Read a plan, check the files it names, and report its first problem, if any",
		Example: `  riskaudit plan check monthly-audit.yaml`,
		Args:    cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			pl, err := plan.Load(args[0])
			if err != nil {
				return err
			}
			for _, key := range append(plan.FileKeys, "history") {
				if err := pl.CheckFile(key); err != nil {
					return err
				}
			}
			if err := pl.CheckClusterFiles(); err != nil {
				return err
			}
			if err := pl.CheckClusterOptions(); err != nil {
				return err
			}
			fmt.Fprintf(s.out, "%s: no problems found (its keys and values are valid, and the files it names can be read)\n", args[0])
			return nil
		},
	}
	withExitStatuses(initCmd, exitStatus{exitOK, ""},
		exitStatus{exitUsage, "wrong usage: an unknown flag, or an --out that exists (without --force)\n     or is not a regular file"},
		exitStatus{exitOtherFailed, ""})
	withExitStatuses(checkCmd, exitStatus{exitOK, "success: no problem found"},
		exitStatus{exitUsage, "wrong usage: an unknown flag, or not exactly one plan"},
		exitStatus{exitBadInput, "bad input: the plan, or a file it names, cannot be used as it is"},
		exitStatus{exitOtherFailed, stdoutFailed})
	c.AddCommand(initCmd, checkCmd)
	return withExitStatuses(c, exitStatus{exitOK, groupHelp}, exitStatus{exitUsage, groupUsage})
}
