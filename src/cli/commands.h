/*
 * commands.h — private to the command line (src/cli): the commands other
 * than build, each a function main() calls with its parsed arguments and
 * whose return value is the exit status.
 */
#ifndef FITPROOF_CLI_COMMANDS_H
#define FITPROOF_CLI_COMMANDS_H

/* fitproof lint SPEC: spec, data and every model's design, no fit. */
int command_lint(const char *spec_path);
/* fitproof scaffold DATA: a commented starting spec on stdout. */
int command_scaffold(const char *data_path);

#endif
