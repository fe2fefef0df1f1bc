/*
 * verify.c — `fitproof verify DIR`: rebuilds the archived spec of a report
 * folder, in memory, on the data the archived spec itself names (its data
 * path, relative to the spec's folder the manifest records), and compares
 * the fresh build with the folder: every file byte for byte, the manifest's
 * list of files and digests entry by entry, and the folder's contents (a
 * file the build does not make is a difference). Says which data file and
 * digest it used. Reports "reproduced" (exit 0) or each difference
 * (exit 1); a folder that is not a report, or data found inside it, is
 * exit 2.
 */
#define _XOPEN_SOURCE 700 /* realpath */
#include "cli.h"

#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

static const char VERIFY_HELP[] =
    "usage: fitproof verify DIR [--data FILE] [--database] [--public-key PUBLIC.pem]\n"
    "                       [--strict]\n"
    "\n"
    "Rebuilds the report in DIR from the spec archived there and the data file\n"
    "that spec names (or the copy DIR stores), and compares every file, and the\n"
    "manifest's list of files and digests, with the folder. A file in DIR that\n"
    "the build does not make is a difference. Prints the data and the SHA-256 it\n"
    "used. A database's rows come from the copy DIR stores when it has one.\n"
    "\n"
    "  --data FILE              the data file, when the folder or the data were moved;\n"
    "                           it must have the SHA-256 the manifest records\n"
    "  --database               read a database's rows again from the database,\n"
    "                           even when DIR stores them, to see whether they changed\n"
    "  --public-key PUBLIC.pem  also check DIR/manifest.sig (written by fitproof\n"
    "                           sign) with this Ed25519 public key or certificate\n"
    "  --strict                 fail when fitproof's version or a library's differs\n"
    "                           from the build's (each difference is always listed)\n"
    "\n"
    "Exit status: 0 every file reproduced exactly (and, with --public-key, the\n"
    "signature is good); 1 something differs or the signature is missing or\n"
    "bad (each finding is listed); 2 DIR is not a report folder, the data lie\n"
    "inside it, or its spec or data cannot be read.\n";

/* The 1-based line of the first byte where a and b differ. */
static size_t first_difference_line(const char *a, size_t a_length, const char *b,
                                    size_t b_length)
{
    size_t line = 1;
    for (size_t i = 0; i < a_length && i < b_length && a[i] == b[i]; i++)
        line += a[i] == '\n';
    return line;
}

/* Compares one freshly built file with its namesake in dir; prints what
   differs. Returns true when identical. */
static bool compare_file(const char *dir, const char *name, const char *bytes,
                         size_t length, const audit_manifest *m)
{
    char *path = path_join(dir, name);
    size_t old_length;
    const char *why;
    char *old = file_read_all(path, &old_length, &why);
    free(path);
    if (!old) {
        printf("  %s: cannot be read in the folder (%s)\n", name, why);
        return false;
    }
    bool same = old_length == length && memcmp(old, bytes, length) == 0;
    if (!same) {
        char digest[AUDIT_DIGEST_SIZE];
        audit_sha256(old, old_length, digest);
        const audit_entry *entry = audit_manifest_find(m, name);
        bool tampered = entry && strcmp(entry->sha256, digest) != 0;
        printf(
            "  %s: differs from a fresh build from line %zu on (%zu bytes in the folder, "
            "%zu rebuilt)%s\n",
            name, first_difference_line(old, old_length, bytes, length), old_length, length,
            tampered ? "; the folder's copy was also changed after it was written" : "");
    }
    free(old);
    return same;
}

static bool same_text(const char *a, const char *b)
{
    return (!a && !b) || (a && b && strcmp(a, b) == 0);
}

/* The folder's manifest against the fresh build's: inputs, then the list
   of files with their digests and sizes, in order. */
static bool compare_manifests(const audit_manifest *folder, const audit_manifest *fresh,
                              const char *stored_rows)
{
    bool same = true;
    if (strcmp(folder->spec_sha256, fresh->spec_sha256) != 0) {
        printf("  %s: the archived spec was changed after the build (SHA-256 %s, the "
               "manifest says %s)\n",
               folder->spec_file, fresh->spec_sha256, folder->spec_sha256);
        same = false;
    }
    if (strcmp(folder->data_sha256, fresh->data_sha256) != 0 && stored_rows) {
        printf("  %s: the stored rows were changed after the build (SHA-256 %s, the manifest "
               "says %s)\n",
               folder->data_archived, fresh->data_sha256, folder->data_sha256);
        same = false;
    } else if (strcmp(folder->data_sha256, fresh->data_sha256) != 0) {
        printf("  data %s: the data file changed since the build (SHA-256 %s, the manifest "
               "says %s)\n",
               folder->data_path, fresh->data_sha256, folder->data_sha256);
        same = false;
    }
    if (!same_text(folder->template_path, fresh->template_path)) {
        printf("  manifest.json: names the page template %s, a fresh build %s\n",
               folder->template_path ? folder->template_path : "(none)",
               fresh->template_path ? fresh->template_path : "(none)");
        same = false;
    } else if (fresh->template_path &&
               strcmp(folder->template_sha256, fresh->template_sha256) != 0) {
        printf("  template %s: the page template changed since the build\n",
               folder->template_path);
        same = false;
    }
    for (size_t i = 0; i < fresh->n_outputs; i++) {
        const audit_entry *want = &fresh->outputs[i];
        const audit_entry *have = audit_manifest_find(folder, want->name);
        if (!have) {
            printf("  manifest.json: does not list %s, which a fresh build makes\n",
                   want->name);
            same = false;
        } else if (strcmp(have->sha256, want->sha256) != 0 || have->bytes != want->bytes) {
            printf("  manifest.json: its digest or size of %s is not the fresh build's\n",
                   want->name);
            same = false;
        } else if (have != &folder->outputs[i]) {
            printf("  manifest.json: lists %s out of the order a fresh build writes\n",
                   want->name);
            same = false;
        }
    }
    for (size_t i = 0; i < folder->n_outputs; i++)
        if (!audit_manifest_find(fresh, folder->outputs[i].name)) {
            printf("  manifest.json: lists %s, which a fresh build does not make\n",
                   folder->outputs[i].name);
            same = false;
        }
    return same;
}

/* Every file of the folder that the fresh build did not make. */
static bool no_strays(const char *dir, const output_set *set)
{
    size_t count;
    char **names = output_list_folder(dir, &count);
    bool none = true;
    for (size_t i = 0; i < count; i++) {
        /* The signature is the one file a build never makes and the
           manifest cannot list; verify --public-key checks it. */
        if (output_find(set, names[i]) == SIZE_MAX &&
            strcmp(names[i], AUDIT_SIGNATURE_FILE) != 0) {
            printf("  %s: in the folder, but a fresh build does not make it\n", names[i]);
            none = false;
        }
        free(names[i]);
    }
    free(names);
    return none;
}

/* Whether path (which exists) lies inside the folder dir. */
static bool inside(const char *dir, const char *path)
{
    char *folder = realpath(dir, NULL), *file = realpath(path, NULL);
    size_t length = folder ? strlen(folder) : 0;
    bool in = folder && file && strncmp(folder, file, length) == 0 && file[length] == '/';
    free(folder);
    free(file);
    return in;
}

static bool same_file(const char *a, const char *b)
{
    char *ra = realpath(a, NULL), *rb = realpath(b, NULL);
    bool same = ra && rb ? strcmp(ra, rb) == 0 : strcmp(a, b) == 0;
    free(ra);
    free(rb);
    return same;
}

/* Points the archived spec's data and template paths at the files they
   name from the spec's original folder. Returns false (exit 2) after
   recording an error when one of them lies inside the report folder; sets
   *agree false when the manifest names another file than the spec. */
/* A data file given with --data must be the one the report was built
   from: its SHA-256 is the manifest's (for files whose digest is of their
   bytes; a SQLite file's digest is of its rows, compared after the build). */
static bool same_digest(const char *path, const spec *s, const audit_manifest *m,
                        error_list *errors)
{
    if (s->data.source == SPEC_SOURCE_SQLITE)
        return true;
    const char *why;
    src_mark whole = {0, 0};
    char digest[AUDIT_DIGEST_SIZE];
    if (!audit_file_sha256(path, DATA_FILE_MAX, digest, &why)) {
        error_at(errors, path, whole, "cannot read it: %s", why);
        return false;
    }
    if (strcmp(digest, m->data_sha256) == 0)
        return true;
    error_at(errors, path, whole,
             "its SHA-256 is %s, but the report was built from data whose SHA-256 is %s; "
             "give the data file the report was built from",
             digest, m->data_sha256);
    return false;
}

/* A SQL source's rows as the folder stores them (report.archive_data):
   the build reads them in place of the database. */
static bool use_stored_rows(const char *dir, const audit_manifest *m, spec *s,
                            error_list *errors)
{
    src_mark whole = {0, 0};
    char *path = path_join(dir, m->data_archived);
    if (access(path, F_OK) != 0 || !m->data_kinds) {
        error_at(errors, path, whole,
                 !m->data_kinds ? "the manifest lists these stored rows without their columns' "
                                  "kinds (it was changed); verify with --database to read the "
                                  "rows from the database again"
                                : "the rows the folder stores are missing; put the file back, "
                                  "or verify with --database to read the rows from the "
                                  "database again");
        free(path);
        return false;
    }
    s->data.stored_rows = path;
    s->data.n_stored_kinds = m->n_data_kinds;
    s->data.stored_kinds = xcalloc(m->n_data_kinds ? m->n_data_kinds : 1, sizeof(spec_kind));
    for (size_t j = 0; j < m->n_data_kinds; j++) {
        const char *kind = m->data_kinds[j];
        s->data.stored_kinds[j] = strcmp(kind, "numeric") == 0    ? SPEC_KIND_NUMERIC
                                  : strcmp(kind, "category") == 0 ? SPEC_KIND_CATEGORY
                                  : strcmp(kind, "date") == 0     ? SPEC_KIND_DATE
                                                                  : SPEC_KIND_INFER;
    }
    s->data.stored_query = xstrdup(m->data_query ? m->data_query : "");
    s->data.stored_server = xstrdup(m->data_server ? m->data_server : "");
    return true;
}

static bool locate_inputs(const char *dir, const audit_manifest *m, spec *s,
                          const char *data_option, bool from_database, bool *agree,
                          error_list *errors)
{
    src_mark whole = {0, 0};
    char *spec_dir = path_join(dir, m->spec_folder);
    bool ok = true;
    bool database = s->data.source == SPEC_SOURCE_SQLITE || s->data.source == SPEC_SOURCE_POSTGRES;
    bool stored = database && m->data_archived && !data_option && !from_database;
    if (stored)
        ok = use_stored_rows(dir, m, s, errors);
    /* A server's rows are read again over the connection the spec names;
       a change in them shows as a different data digest. */
    bool file = !stored && s->data.source != SPEC_SOURCE_POSTGRES && s->data.path;
    /* The data, in this order: --data, the copy stored in the folder, the
       path the archived spec names. */
    char *archived = file && !database && !data_option && m->data_archived
                         ? path_join(dir, m->data_archived)
                                                                : NULL;
    bool use_archived = archived && access(archived, F_OK) == 0;
    char *data = !file          ? NULL
                 : data_option  ? xstrdup(data_option)
                 : use_archived ? xstrdup(archived)
                                : path_join(spec_dir, s->data.path);
    char *listed = file ? path_join(dir, m->data_path) : NULL;
    if (!file) {
        /* nothing to locate */
    } else if (use_archived) {
        /* The folder's own copy, which the manifest lists: checked by its
           digest here, and as one of the folder's files after the build. */
        ok = same_digest(data, s, m, errors);
    } else if (inside(dir, data) || inside(dir, listed)) {
        error_at(errors, inside(dir, data) ? data : listed, whole,
                 "the data file lies inside the report folder, where no build puts it; "
                 "verify reads the data the archived spec names, outside the folder");
        ok = false;
    } else if (access(data, F_OK) != 0) {
        /* A moved folder: the data stayed behind, or moved elsewhere. */
        error_at(errors, data, whole,
                 data_option ? "there is no such file; give the data file the report was "
                               "built from with --data"
                             : "the data file the archived spec names is not there (the "
                               "report folder or the data were moved); give its place with "
                               "--data FILE, and verify checks it by its SHA-256");
        ok = false;
    } else if (data_option && !same_digest(data, s, m, errors)) {
        ok = false;
    } else if (!data_option && !same_file(data, listed)) {
        printf("  manifest.json: names the data %s, but the archived spec's data path "
               "leads to %s\n",
               m->data_path, data);
        *agree = false;
    }
    if (file) {
        free(s->data.resolved);
        s->data.resolved = data;
    }
    free(listed);
    free(archived);
    if (ok && s->report.template_written) {
        char *page = path_join(spec_dir, s->report.template_written);
        if (inside(dir, page)) {
            error_at(errors, page, whole,
                     "the page template lies inside the report folder, "
                     "where no build puts it; verify reads the template the archived spec "
                     "names, outside the folder");
            ok = false;
        }
        free(s->report.template_path);
        s->report.template_path = page;
    }
    free(spec_dir);
    return ok;
}

/* Says each way this machine differs from the one that built the folder:
   fitproof's version and each library's. Identity is still decided by the
   bytes; a difference is worth knowing when a later rebuild disagrees. */
static size_t environment_differences(const audit_manifest *folder,
                                      const audit_manifest *fresh)
{
    size_t differences = 0;
    if (folder->fitproof_version && strcmp(folder->fitproof_version, FITPROOF_VERSION) != 0) {
        printf("  environment: the folder was built by fitproof %s, this is %s\n",
               folder->fitproof_version, FITPROOF_VERSION);
        differences++;
    }
    for (size_t i = 0; i < fresh->n_libraries; i++) {
        const char *then = NULL;
        for (size_t j = 0; j < folder->n_libraries && !then; j++)
            if (strcmp(folder->library_names[j], fresh->library_names[i]) == 0)
                then = folder->library_versions[j];
        if (then && strcmp(then, fresh->library_versions[i]) == 0)
            continue;
        printf("  environment: %s was %s at the build, is %s here\n",
               fresh->library_names[i], then ? then : "not recorded",
               fresh->library_versions[i]);
        differences++;
    }
    if (differences == 0)
        printf("  environment: fitproof and every library have the versions of the build\n");
    return differences;
}

/* The manifest the fresh build made (in set). */
static audit_manifest *fresh_manifest(const output_set *set, error_list *errors)
{
    const char *name, *bytes;
    size_t length;
    output_get(set, output_find(set, "manifest.json"), &name, &bytes, &length);
    return audit_manifest_parse("manifest.json", bytes, length, errors);
}

/* Which data the fresh build read, and their digest. */
static void print_data_used(const spec *s, const audit_manifest *m, const audit_manifest *fresh)
{
    if (s->data.stored_rows) {
        printf("  data used: %s (the rows the folder stores, as received from %s; SHA-256 "
               "%s)\n",
               s->data.stored_rows,
               s->data.source == SPEC_SOURCE_POSTGRES ? "PostgreSQL" : "the SQLite file",
               fresh->data_sha256);
        return;
    }
    if (!s->data.resolved) {
        printf("  data used: PostgreSQL '%s', read again (SHA-256 %s)\n", s->data.connection,
               fresh->data_sha256);
        return;
    }
    bool archived = m->data_archived && fresh->data_archived &&
                    strstr(s->data.resolved, m->data_archived) &&
                    strcmp(strstr(s->data.resolved, m->data_archived), m->data_archived) == 0;
    printf("  data used: %s (%sSHA-256 %s)\n", s->data.resolved,
           archived ? "the copy stored in the folder; " : "", fresh->data_sha256);
}

/* Rebuilds and compares; the manifest m and spec s are the folder's. */
static int compare_with_fresh_build(const char *dir, const audit_manifest *m, const spec *s,
                                    bool same, const char *public_key_path, bool strict,
                                    error_list *errors)
{
    output_set *set = output_set_new();
    int status = pipeline_run(s, dir, m->spec_folder, set, NULL, errors);
    audit_manifest *fresh = NULL;
    if (status == EXIT_OK || status == EXIT_CHECK_FAILED)
        fresh = fresh_manifest(set, errors);
    if (fresh) {
        print_data_used(s, m, fresh);
        if (s->report.template_path && fresh->template_path)
            printf("  page template used: %s (SHA-256 %s)\n", s->report.template_path,
                   fresh->template_sha256);
        same = compare_manifests(m, fresh, s->data.stored_rows) && same;
        size_t n = output_count(set);
        for (size_t i = 0; i < n; i++) {
            const char *name, *bytes;
            size_t length;
            output_get(set, i, &name, &bytes, &length);
            /* The manifest records library versions, which may differ on
               another machine without changing any result; its list of
               files and digests was compared above. */
            if (strcmp(name, "manifest.json") != 0)
                same = compare_file(dir, name, bytes, length, m) && same;
        }
        same = no_strays(dir, set) && same;
        size_t differences = environment_differences(m, fresh);
        if (strict && differences > 0) {
            printf("  --strict: %zu difference%s of the environment count as a failure\n",
                   differences, differences == 1 ? "" : "s");
            same = false;
        }
        if (public_key_path)
            same = verify_signature(dir, public_key_path) && same;
        if (same)
            printf("reproduced: all %zu files are identical to a fresh build%s\n", n - 1,
                   public_key_path ? ", and the signature is good" : "");
        else
            printf("NOT reproduced: the differences are listed above\n");
        status = same ? EXIT_OK : EXIT_CHECK_FAILED;
    } else if (status == EXIT_OK || status == EXIT_CHECK_FAILED) {
        status = EXIT_INTERNAL;
    }
    audit_manifest_free(fresh);
    output_set_free(set);
    return status;
}

static int verify(const char *dir, const char *public_key_path, const char *data_option,
                  bool from_database, bool strict)
{
    error_list errors;
    error_list_init(&errors);
    audit_manifest *m = audit_manifest_read(dir, &errors);
    if (m && !m->spec_folder) {
        src_mark whole = {0, 0};
        char *path = path_join(dir, "manifest.json");
        error_at(&errors, path, whole,
                 "the manifest does not say where the spec was (an "
                 "older fitproof wrote it); rebuild the report, then verify it");
        free(path);
        audit_manifest_free(m);
        m = NULL;
    }
    char *spec_path = m ? path_join(dir, m->spec_file) : NULL;
    spec *s = spec_path ? spec_load(spec_path, &errors) : NULL;
    int status = EXIT_USER_ERROR;
    bool agree = true;
    if (s && locate_inputs(dir, m, s, data_option, from_database, &agree, &errors)) {
        printf("fitproof verify %s\n", dir);
        cli_repeat_recorded_date(s, m);
        if (m->report_date)
            printf("  report date: %s (from %s at the build)\n", m->report_date,
                   m->report_date_source ? m->report_date_source : "the build");
        status = compare_with_fresh_build(dir, m, s, agree, public_key_path, strict, &errors);
    }
    error_list_print(&errors);
    spec_free(s);
    free(spec_path);
    audit_manifest_free(m);
    error_list_free(&errors);
    return status;
}

int command_verify(int argc, char **argv)
{
    const char *dir = NULL, *public_key = NULL, *data_file = NULL;
    bool strict = false, from_database = false;
    for (int i = 2; i < argc; i++) {
        if (strcmp(argv[i], "--help") == 0 || strcmp(argv[i], "-h") == 0) {
            fputs(VERIFY_HELP, stdout);
            return EXIT_OK;
        }
        if (strcmp(argv[i], "--strict") == 0) {
            strict = true;
        } else if (strcmp(argv[i], "--database") == 0) {
            from_database = true;
        } else if (strcmp(argv[i], "--data") == 0) {
            if (i + 1 >= argc)
                return cli_usage_error("--data needs the data file the report was built from");
            data_file = argv[++i];
        } else if (strcmp(argv[i], "--public-key") == 0) {
            if (i + 1 >= argc)
                return cli_usage_error("--public-key needs a public key or certificate file");
            public_key = argv[++i];
        } else if (argv[i][0] == '-' || dir) {
            return cli_usage_error("verify takes one report folder, as in 'fitproof verify "
                                   "cylinders-report'");
        } else {
            dir = argv[i];
        }
    }
    if (!dir)
        return cli_usage_error("verify takes one report folder, as in 'fitproof verify "
                               "cylinders-report'");
    return verify(dir, public_key, data_file, from_database, strict);
}
