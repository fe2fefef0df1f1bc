/*
 * main.c — the fitproof command line: dispatches to the commands, each in
 * its own file of this folder (build.c, verify.c), which run the pipeline
 * spec → data → design/fit → narrate → render → output.
 */
#include <stdio.h>
#include <string.h>

#include "../fit/fit.h"
#include "cli.h"

static const char USAGE[] =
    "usage: fitproof COMMAND [ARGUMENTS]\n"
    "\n"
    "Commands:\n"
    "  build SPEC.yaml [-o DIR]  fit the models of a spec and write the report folder\n"
    "  verify DIR                rebuild a report folder and compare it byte for byte\n"
    "\n"
    "  fitproof COMMAND --help   more about one command\n"
    "  fitproof --version        the version\n"
    "\n"
    "Exit status: 0 success; 1 a declared check failed, or verify found a\n"
    "difference; 2 usage, spec or data error (nothing written); 3 internal error.\n";

int cli_usage_error(const char *message)
{
    fprintf(stderr, "fitproof: error: %s; see 'fitproof --help'\n", message);
    return EXIT_USER_ERROR;
}

int main(int argc, char **argv)
{
    fit_library_init();
    if (argc < 2)
        return cli_usage_error("no command given");
    const char *command = argv[1];
    if (strcmp(command, "--help") == 0 || strcmp(command, "-h") == 0) {
        fputs(USAGE, stdout);
        return EXIT_OK;
    }
    if (strcmp(command, "--version") == 0) {
        printf("fitproof %s\n", FITPROOF_VERSION);
        return EXIT_OK;
    }
    if (strcmp(command, "build") == 0)
        return command_build(argc, argv);
    if (strcmp(command, "verify") == 0)
        return command_verify(argc, argv);
    fprintf(stderr, "fitproof: error: unknown command '%s'; see 'fitproof --help'\n", command);
    return EXIT_USER_ERROR;
}
