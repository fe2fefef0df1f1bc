/*
 * export.c — runs pandoc in a private temporary folder holding the
 * Markdown report and its figures, with SOURCE_DATE_EPOCH fixed so that
 * the documents carry no build time, and reads the result back.
 */
#define _XOPEN_SOURCE 700
#include "export.h"

#include <errno.h>
#include <ftw.h>
#include <spawn.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <sys/wait.h>
#include <unistd.h>

extern char **environ;

static bool on_path(const char *program)
{
    const char *path = getenv("PATH");
    if (!path)
        return false;
    buf candidate;
    buf_init(&candidate);
    bool found = false;
    while (*path && !found) {
        size_t length = strcspn(path, ":");
        buf_reset(&candidate);
        buf_printf(&candidate, "%.*s/%s", (int)length, length ? path : ".", program);
        found = access(candidate.data, X_OK) == 0;
        path += length + (path[length] == ':');
    }
    buf_free(&candidate);
    return found;
}

bool export_check(const spec *s, error_list *errors)
{
    unsigned wanted = s->report.formats & (SPEC_FORMAT_PDF | SPEC_FORMAT_DOCX);
    if (!wanted)
        return true;
    const char *names = wanted == (SPEC_FORMAT_PDF | SPEC_FORMAT_DOCX) ? "pdf and docx"
                        : wanted == SPEC_FORMAT_PDF                  ? "pdf"
                                                                     : "docx";
    if (!on_path("pandoc")) {
        error_at(errors, s->path, s->report.formats_at,
                 "report.formats asks for %s, which fitproof makes with pandoc, and pandoc "
                 "is not installed; install it (Debian package pandoc) or remove %s",
                 names, names);
        return false;
    }
    if ((wanted & SPEC_FORMAT_PDF) && !on_path("pdflatex")) {
        error_at(errors, s->path, s->report.formats_at,
                 "report.formats asks for pdf, which pandoc makes with pdflatex, and pdflatex "
                 "is not installed; install it (Debian package texlive-latex-recommended) or "
                 "remove pdf");
        return false;
    }
    return true;
}

static int remove_entry(const char *path, const struct stat *info, int flag, struct FTW *walk)
{
    (void)info;
    (void)flag;
    (void)walk;
    return remove(path);
}

/* Writes the set's Markdown and figures into dir. */
static bool stage_inputs(const output_set *set, const char *dir)
{
    buf path;
    buf_init(&path);
    bool ok = true;
    for (size_t i = 0; ok && i < output_count(set); i++) {
        const char *name, *bytes;
        size_t length;
        output_get(set, i, &name, &bytes, &length);
        bool wanted = strcmp(name, "report.md") == 0 || strncmp(name, "figures/", 8) == 0;
        if (!wanted)
            continue;
        if (strncmp(name, "figures/", 8) == 0) {
            buf_reset(&path);
            buf_printf(&path, "%s/figures", dir);
            mkdir(path.data, 0700);
        }
        buf_reset(&path);
        buf_printf(&path, "%s/%s", dir, name);
        FILE *f = fopen(path.data, "wb");
        ok = f && fwrite(bytes, 1, length, f) == length;
        ok = (f && fclose(f) == 0) && ok;
    }
    buf_free(&path);
    return ok;
}

/* pandoc report.md -o report.EXT, run inside dir. */
static bool run_pandoc(const char *dir, const char *extension, error_list *errors)
{
    buf output;
    buf_init(&output);
    buf_printf(&output, "report.%s", extension);
    char *argv[] = {"pandoc", "--standalone", "--resource-path=.", "report.md", "-o",
                    output.data, NULL};
    char *env_epoch = "SOURCE_DATE_EPOCH=0";
    size_t n_env = 0;
    while (environ[n_env])
        n_env++;
    char **env = xcalloc(n_env + 2, sizeof(char *));
    memcpy(env, environ, n_env * sizeof(char *));
    env[n_env] = env_epoch;
    char *previous = getcwd(NULL, 0);
    pid_t pid;
    int status = -1;
    bool ok = previous && chdir(dir) == 0 &&
              posix_spawnp(&pid, "pandoc", NULL, NULL, argv, env) == 0 &&
              waitpid(pid, &status, 0) == pid && WIFEXITED(status) &&
              WEXITSTATUS(status) == 0;
    if (previous && chdir(previous) != 0)
        ok = false;
    if (!ok) {
        src_mark whole = {0, 0};
        error_at(errors, "pandoc", whole, "making report.%s failed (see pandoc's message "
                 "above); the report folder was not written", extension);
    }
    free(previous);
    free(env);
    buf_free(&output);
    return ok;
}

int export_run(const spec *s, output_set *set, error_list *errors)
{
    unsigned wanted = s->report.formats & (SPEC_FORMAT_PDF | SPEC_FORMAT_DOCX);
    if (!wanted)
        return EXIT_OK;
    char template_dir[] = "/tmp/fitproof-export-XXXXXX";
    char *dir = mkdtemp(template_dir);
    if (!dir || !stage_inputs(set, dir)) {
        src_mark whole = {0, 0};
        error_at(errors, "export", whole, "cannot prepare pandoc's input: %s", strerror(errno));
        return EXIT_INTERNAL;
    }
    int status = EXIT_OK;
    const char *extensions[] = {"pdf", "docx"};
    const unsigned flags[] = {SPEC_FORMAT_PDF, SPEC_FORMAT_DOCX};
    for (size_t k = 0; k < 2 && status == EXIT_OK; k++) {
        if (!(wanted & flags[k]))
            continue;
        if (!run_pandoc(dir, extensions[k], errors)) {
            status = EXIT_INTERNAL;
            break;
        }
        buf path;
        buf_init(&path);
        buf_printf(&path, "%s/report.%s", dir, extensions[k]);
        size_t length;
        const char *why;
        char *bytes = file_read_all(path.data, &length, &why);
        buf_reset(&path);
        buf_printf(&path, "report.%s", extensions[k]);
        if (bytes)
            output_add(set, path.data, bytes, length);
        else
            status = EXIT_INTERNAL;
        buf_free(&path);
    }
    nftw(dir, remove_entry, 8, FTW_DEPTH | FTW_PHYS);
    return status;
}
