package main

import (
	"errors"

	"github.com/urfave/cli/v2"
)

func planCommand() *cli.Command {
	return &cli.Command{
		Name:      "plan",
		Usage:     "search every split of the decimation ratio and recommend a chain",
		UsageText: "stepdown plan [SPEC.toml] [--out DIR] [--json] [--max-stages N] [--jobs N] [--quiet] [--timeout DUR]",
		Action:    func(c *cli.Context) error { return errors.New("plan: not implemented yet") },
	}
}

func checkCommand() *cli.Command {
	return &cli.Command{
		Name:      "check",
		Usage:     "evaluate a chain you name against the spec",
		UsageText: "stepdown check SPEC.toml --chain CHAIN [--out DIR] [--json]",
		Action:    func(c *cli.Context) error { return errors.New("check: not implemented yet") },
	}
}
