/*
 * verify.c — `fitproof verify DIR`: rebuilds the archived spec of a report
 * folder on the data its manifest names, in memory, and compares every
 * file byte for byte with the folder. Reports "reproduced" (exit 0) or
 * each file that differs and how (exit 1).
 */
#include "cli.h"

#include <stdio.h>
#include <stdlib.h>
#include <string.h>

static const char VERIFY_HELP[] =
    "usage: fitproof verify DIR [--public-key PUBLIC.pem]\n"
    "\n"
    "Rebuilds the report in DIR from the spec archived there and the data file\n"
    "its manifest names, and compares every file with the one in DIR.\n"
    "\n"
    "  --public-key PUBLIC.pem  also check DIR/manifest.sig (written by fitproof\n"
    "                           sign) with this Ed25519 public key or certificate\n"
    "\n"
    "Exit status: 0 every file reproduced exactly (and, with --public-key, the\n"
    "signature is good); 1 something differs or the signature is missing or\n"
    "bad (each finding is listed); 2 DIR is not a report folder, or its spec or data\n"
    "cannot be read.\n";

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
static bool compare_file(const char *dir, const char *name, const char *bytes, size_t length,
                         const audit_manifest *m)
{
    char *path = path_join(dir, name);
    size_t old_length;
    const char *why;
    char *old = file_read_all(path, &old_length, &why);
    free(path);
    if (!old) {
        printf("  %s: missing from the folder (%s)\n", name, why);
        return false;
    }
    bool same = old_length == length && memcmp(old, bytes, length) == 0;
    if (!same) {
        char digest[AUDIT_DIGEST_SIZE];
        audit_sha256(old, old_length, digest);
        bool tampered = false;
        for (size_t i = 0; i < m->n_outputs; i++)
            if (strcmp(m->outputs[i].name, name) == 0)
                tampered = strcmp(m->outputs[i].sha256, digest) != 0;
        printf("  %s: differs from a fresh build from line %zu on (%zu bytes in the folder, "
               "%zu rebuilt)%s\n",
               name, first_difference_line(old, old_length, bytes, length), old_length, length,
               tampered ? "; the folder's copy was also changed after it was written" : "");
    }
    free(old);
    return same;
}

static bool inputs_unchanged(const audit_manifest *m, const spec *s)
{
    bool ok = true;
    char digest[AUDIT_DIGEST_SIZE];
    audit_sha256(s->source, s->source_length, digest);
    if (strcmp(digest, m->spec_sha256) != 0) {
        printf("  %s: the archived spec was changed after the build (SHA-256 %s, the "
               "manifest says %s)\n",
               m->spec_file, digest, m->spec_sha256);
        ok = false;
    }
    const char *why;
    if (!audit_file_sha256(s->data.resolved, digest, &why)) {
        printf("  data %s: %s\n", m->data_path, why);
        ok = false;
    } else if (strcmp(digest, m->data_sha256) != 0) {
        printf("  data %s: the data file changed since the build (SHA-256 %s, the manifest "
               "says %s)\n",
               m->data_path, digest, m->data_sha256);
        ok = false;
    }
    if (m->template_path) {
        if (!audit_file_sha256(s->report.template_path, digest, &why)) {
            printf("  template %s: %s\n", m->template_path, why);
            ok = false;
        } else if (strcmp(digest, m->template_sha256) != 0) {
            printf("  template %s: the page template changed since the build\n",
                   m->template_path);
            ok = false;
        }
    }
    return ok;
}

static int verify(const char *dir, const char *public_key_path)
{
    error_list errors;
    error_list_init(&errors);
    audit_manifest *m = audit_manifest_read(dir, &errors);
    char *spec_path = m ? path_join(dir, m->spec_file) : NULL;
    spec *s = spec_path ? spec_load(spec_path, &errors) : NULL;
    int status = EXIT_USER_ERROR;
    if (s) {
        /* The archived spec's data path is relative to the original spec's
           folder; the manifest says where the data are from the report's. */
        free(s->data.resolved);
        s->data.resolved = path_join(dir, m->data_path);
        if (m->template_path) {
            free(s->report.template_path);
            s->report.template_path = path_join(dir, m->template_path);
        }
        printf("fitproof verify %s\n", dir);
        cli_repeat_recorded_date(s, m);
        if (m->report_date)
            printf("  report date: %s (from %s at the build)\n", m->report_date,
                   m->report_date_source ? m->report_date_source : "the build");
        bool same = inputs_unchanged(m, s);
        output_set *set = output_set_new();
        status = pipeline_run(s, dir, set, NULL, &errors);
        if (status == EXIT_OK || status == EXIT_CHECK_FAILED) {
            size_t n = output_count(set);
            for (size_t i = 0; i < n; i++) {
                const char *name, *bytes;
                size_t length;
                output_get(set, i, &name, &bytes, &length);
                /* The manifest records library versions, which may differ on
                   another machine without changing any result; a result that
                   did change shows in its own file. */
                if (strcmp(name, "manifest.json") != 0)
                    same = compare_file(dir, name, bytes, length, m) && same;
            }
            if (m->fitproof_version && strcmp(m->fitproof_version, FITPROOF_VERSION) != 0)
                printf("  note: the folder was built by fitproof %s, this is %s\n",
                       m->fitproof_version, FITPROOF_VERSION);
            if (public_key_path)
                same = verify_signature(dir, public_key_path) && same;
            if (same)
                printf("reproduced: all %zu files are identical to a fresh build%s\n", n - 1,
                       public_key_path ? ", and the signature is good" : "");
            else
                printf("NOT reproduced: the differences are listed above\n");
            status = same ? EXIT_OK : EXIT_CHECK_FAILED;
        }
        output_set_free(set);
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
    const char *dir = NULL, *public_key = NULL;
    for (int i = 2; i < argc; i++) {
        if (strcmp(argv[i], "--help") == 0 || strcmp(argv[i], "-h") == 0) {
            fputs(VERIFY_HELP, stdout);
            return EXIT_OK;
        }
        if (strcmp(argv[i], "--public-key") == 0) {
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
    return verify(dir, public_key);
}
