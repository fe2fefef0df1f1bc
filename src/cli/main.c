/*
 * main.c — the fitproof command line: dispatches to the commands, each in
 * its own file of this folder (build.c, lint.c, scaffold.c, verify.c,
 * sign.c, diff.c);
 * build and verify run the pipeline spec → data → design/fit → narrate →
 * render → output (pipeline.c).
 */
#include <signal.h>
#include <stdio.h>
#include <string.h>
#if defined(__GLIBC__)
#include <malloc.h>
#endif

#include "../fit/fit.h"
#include "cli.h"

static const char USAGE[] =
    "usage: fitproof COMMAND [ARGUMENTS]\n"
    "\n"
    "Commands:\n"
    "  build SPEC.yaml [-o DIR]  fit the models of a spec and write the report folder\n"
    "  lint SPEC.yaml            check a spec and its data as build would, without fitting\n"
    "  scaffold DATA.csv         print a commented starting spec for a data file\n"
    "  verify DIR                rebuild a report folder and compare it byte for byte\n"
    "  sign DIR --key KEY.pem    sign a report folder (Ed25519, detached)\n"
    "  diff OLD_DIR NEW_DIR      say what changed between two report folders\n"
    "\n"
    "  fitproof COMMAND --help   more about one command\n"
    "  fitproof --version        the version\n"
    "\n"
    "Exit status: 0 success; 1 a declared check failed, verify found a\n"
    "difference, or diff found something to look at; 2 usage, spec or data\n"
    "error (nothing written); 3 internal error.\n";

static const char LINT_HELP[] =
    "usage: fitproof lint SPEC.yaml [--strict]\n"
    "\n"
    "Checks SPEC.yaml, the data file it names and the design of every model,\n"
    "as build would, without fitting or writing anything. Prints one line on\n"
    "success; otherwise every error, located in the spec or the data file.\n"
    "Warnings (likely mistakes that do not stop a build) are printed too.\n"
    "\n"
    "  --strict  treat every warning as an error\n"
    "\n"
    "Exit status: 0 ready to build; 2 usage, spec or data error.\n";

static const char SCAFFOLD_HELP[] =
    "usage: fitproof scaffold DATA.csv > SPEC.yaml\n"
    "       fitproof scaffold LAB.db --table NAME | --query SQL [--key COLUMN]\n"
    "       fitproof scaffold --postgres CONNECTION --query SQL [--key COLUMN]\n"
    "       fitproof scaffold BOOK.xlsx [--sheet NAME] [--header-row N]\n"
    "\n"
    "Reads DATA.csv (or a .tsv file) and prints a starting spec: every column\n"
    "with the kind fitproof infers, category levels with their counts, and a\n"
    "suggested model. Comments explain each guess; check them before building.\n"
    "The data path in the spec is DATA.csv as given, relative to the folder\n"
    "where the spec is saved. A SQLite file or a PostgreSQL connection string\n"
    "is read through a table or a query (with ORDER BY, or a key column).\n"
    "\n"
    "Exit status: 0 printed; 2 usage or data error.\n";

int cli_usage_error(const char *message)
{
    fprintf(stderr, "fitproof: error: %s; see 'fitproof --help'\n", message);
    return EXIT_USER_ERROR;
}

/* scaffold's options naming a database source; false for any other. */
static bool database_option(int argc, char **argv, int *i, scaffold_database *db, bool *bad)
{
    static const char *const names[] = {"--postgres", "--table", "--query", "--key",
                                        "--sheet",    "--header-row", NULL};
    for (size_t k = 0; names[k]; k++) {
        if (strcmp(argv[*i], names[k]) != 0)
            continue;
        if (*i + 1 >= argc) {
            fprintf(stderr, "fitproof: error: %s needs a value; see 'fitproof scaffold --help'\n",
                    names[k]);
            *bad = true;
            return true;
        }
        const char **slot[] = {&db->connection, &db->table, &db->query,
                               &db->key,        &db->sheet, &db->header_row};
        *slot[k] = argv[++*i];
        return true;
    }
    return false;
}

/* lint SPEC and scaffold DATA: one file each, and --help. */
static int one_file_command(int argc, char **argv)
{
    bool lint = strcmp(argv[1], "lint") == 0;
    bool strict = false;
    const char *file = NULL;
    scaffold_database db = {NULL, NULL, NULL, NULL, NULL, NULL};
    for (int i = 2; i < argc; i++) {
        if (strcmp(argv[i], "--help") == 0 || strcmp(argv[i], "-h") == 0) {
            fputs(lint ? LINT_HELP : SCAFFOLD_HELP, stdout);
            return EXIT_OK;
        }
        if (lint && strcmp(argv[i], "--strict") == 0) {
            strict = true;
            continue;
        }
        bool bad = false;
        if (!lint && database_option(argc, argv, &i, &db, &bad)) {
            if (bad)
                return EXIT_USER_ERROR;
            continue;
        }
        if (argv[i][0] == '-' && argv[i][1] != '\0') {
            fprintf(stderr, "fitproof: error: unknown option '%s'; see 'fitproof %s --help'\n",
                    argv[i], argv[1]);
            return EXIT_USER_ERROR;
        }
        if (file)
            return cli_usage_error(lint ? "lint takes one spec file"
                                        : "scaffold takes one data file");
        file = argv[i];
    }
    bool database = db.connection || db.table || db.query || db.key;
    bool sheet = db.sheet || db.header_row;
    if (!lint && sheet && database)
        return cli_usage_error("--sheet and --header-row are for a spreadsheet, not a database");
    if (!lint && database && !db.table == !db.query)
        return cli_usage_error("a database needs --table NAME or --query SQL, not both");
    if (!lint && db.connection && file)
        return cli_usage_error("scaffold reads either a file or --postgres, not both");
    if (!file && !(db.connection && !lint))
        return cli_usage_error(lint ? "lint needs a spec file, as in 'fitproof lint spec.yaml'"
                                    : "scaffold needs a data file, as in 'fitproof scaffold "
                                      "data.csv'");
    return lint ? command_lint(file, strict)
                : command_scaffold(file, database || sheet ? &db : NULL);
}

int main(int argc, char **argv)
{
    fit_library_init();
    /* A write past the file size limit (ulimit -f) then fails with EFBIG,
       which the output stage reports like a full disk, instead of the
       signal ending the process with a partial folder. */
    signal(SIGXFSZ, SIG_IGN);
#if defined(__GLIBC__)
    /* A build allocates and frees many arrays of n doubles. Above 32 MB
       glibc maps each one afresh and unmaps it on free, so that every array
       costs a page fault and a kernel zeroing per page (a tenth of a 1e7-row
       build); kept in the heap, freed arrays are reused. */
    mallopt(M_MMAP_THRESHOLD, 1 << 30);
    mallopt(M_TRIM_THRESHOLD, 1 << 30);
#endif
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
    if (strcmp(command, "sign") == 0)
        return command_sign(argc, argv);
    if (strcmp(command, "diff") == 0)
        return command_diff(argc, argv);
    if (strcmp(command, "lint") == 0 || strcmp(command, "scaffold") == 0)
        return one_file_command(argc, argv);
    fprintf(stderr, "fitproof: error: unknown command '%s'; see 'fitproof --help'\n", command);
    return EXIT_USER_ERROR;
}
