/*
 * test_safety.c — fault injection the test controls (issue 11): a process
 * killed at each step of replacing a report folder, the fallback without
 * RENAME_EXCHANGE, and a data file truncated or rewritten while it is
 * read (through the read hook of util.h). The expected behaviour is the
 * project's own contract (output.h, util.h), no outside source.
 */
#define _XOPEN_SOURCE 700
// clang-format off: cmocka.h needs these three first
#include <stdarg.h>
#include <stddef.h>
#include <setjmp.h>
#include <cmocka.h>
// clang-format on

#include <fcntl.h>
#include <signal.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <sys/wait.h>
#include <time.h>
#include <unistd.h>

#include "../../src/data/data.h"
#include "../../src/output/output.h"
#include "../../src/spec/spec.h"

static char root[64];

static int make_root(void **state)
{
    (void)state;
    strcpy(root, "/tmp/fitproof-safety-XXXXXX");
    return mkdtemp(root) ? 0 : -1;
}

static int remove_root(void **state)
{
    (void)state;
    char command[128];
    snprintf(command, sizeof command, "rm -rf '%s'", root);
    return system(command) == 0 ? 0 : -1;
}

/* A report set whose every file says which build ("old" or "new") made
   it; the manifest lists the others as fitproof's would. */
static output_set *report_set(const char *which)
{
    output_set *set = output_set_new();
    const char *names[] = {"report.md", "figures/m-a.svg", "results.json"};
    buf manifest;
    buf_init(&manifest);
    buf_puts(&manifest, "{\"format\": \"fitproof.manifest/1\", \"spec\": {\"file\": "
                        "\"s.yaml\", \"folder\": \"..\", \"sha256\": \"");
    for (int i = 0; i < 64; i++)
        buf_putc(&manifest, 'a');
    buf_puts(&manifest, "\"}, \"data\": {\"path\": \"../d.csv\", \"sha256\": \"");
    for (int i = 0; i < 64; i++)
        buf_putc(&manifest, 'b');
    buf_puts(&manifest, "\"}, \"outputs\": [");
    for (size_t i = 0; i < 3; i++) {
        buf text;
        buf_init(&text);
        buf_printf(&text, "%s %s\n", which, names[i]);
        buf_printf(&manifest, "%s{\"file\": \"%s\", \"bytes\": %zu, \"sha256\": \"",
                   i ? ", " : "", names[i], text.length);
        for (int k = 0; k < 64; k++)
            buf_putc(&manifest, 'c');
        buf_puts(&manifest, "\"}");
        size_t length = text.length;
        output_add(set, names[i], buf_detach(&text), length);
    }
    buf_puts(&manifest, "]}\n");
    size_t length = manifest.length;
    output_add(set, "manifest.json", buf_detach(&manifest), length);
    return set;
}

/* "old", "new", or "missing"/"mixed" for what dir holds. */
static const char *folder_state(const char *dir)
{
    const char *names[] = {"report.md", "figures/m-a.svg", "results.json"};
    const char *seen = NULL;
    for (size_t i = 0; i < 3; i++) {
        char path[256], text[64] = "";
        snprintf(path, sizeof path, "%s/%s", dir, names[i]);
        FILE *f = fopen(path, "r");
        if (!f)
            return "missing";
        size_t got = fread(text, 1, sizeof text - 1, f);
        fclose(f);
        text[got] = '\0';
        const char *which = strncmp(text, "old ", 4) == 0 ? "old" : "new";
        if (seen && strcmp(seen, which) != 0)
            return "mixed";
        seen = which;
    }
    return seen;
}

/* Entries of root beside dir's name (staging folders). */
static size_t leftovers(const char *name)
{
    char command[256];
    snprintf(command, sizeof command, "ls -d '%s/%s'.* 2>/dev/null | wc -l", root, name);
    FILE *p = popen(command, "r");
    size_t count = 0;
    if (fscanf(p, "%zu", &count) != 1)
        count = 999;
    pclose(p);
    return count;
}

static int commit(const char *which, const char *dir)
{
    output_set *set = report_set(which);
    error_list errors;
    error_list_init(&errors);
    int status = output_commit(set, dir, NULL, 0, &errors);
    for (size_t i = 0; i < errors.count; i++)
        fprintf(stderr, "  %s\n", errors.messages[i]);
    error_list_free(&errors);
    output_set_free(set);
    return status;
}

static const char *kill_at;

static void kill_hook(const char *step)
{
    if (strcmp(step, kill_at) == 0)
        raise(SIGKILL);
}

/* Forks a build of "new" into dir that is killed at step; returns after it
   died (asserting it was killed). */
static void killed_commit(const char *dir, const char *step, bool without_exchange)
{
    fflush(NULL);
    pid_t child = fork();
    assert_true(child >= 0);
    if (child == 0) {
        kill_at = step;
        output_step_hook = kill_hook;
        output_without_exchange = without_exchange;
        commit("new", dir);
        _exit(0);
    }
    int status;
    assert_int_equal(waitpid(child, &status, 0), child);
    assert_true(WIFSIGNALED(status) && WTERMSIG(status) == SIGKILL);
}

/* A kill at every step leaves at dir a whole report, the old or the new
   one, never a mixture and never nothing (with RENAME_EXCHANGE); the next
   build removes what the killed one left and succeeds. */
static void test_killed_at_each_step(void **state)
{
    (void)state;
    const char *steps[] = {"locked", "staged", "exchanged"};
    const char *expect[] = {"old", "old", "new"};
    for (size_t i = 0; i < 3; i++) {
        char dir[128], name[32];
        snprintf(name, sizeof name, "r%zu", i);
        snprintf(dir, sizeof dir, "%s/%s", root, name);
        assert_int_equal(commit("old", dir), EXIT_OK);
        killed_commit(dir, steps[i], false);
        assert_string_equal(folder_state(dir), expect[i]);
        if (i > 0)
            assert_true(leftovers(name) >= 1); /* the staging folder of the killed build */
        assert_int_equal(commit("new", dir), EXIT_OK);
        assert_string_equal(folder_state(dir), "new");
        assert_int_equal(leftovers(name), 0);
    }
}

/* Without RENAME_EXCHANGE: a kill between the two renames leaves no folder
   at dir for a moment; the next build moves the old one back first, then
   replaces it. A kill after both renames leaves the new one. */
static void test_fallback_without_exchange(void **state)
{
    (void)state;
    char dir[128];
    snprintf(dir, sizeof dir, "%s/fallback", root);
    assert_int_equal(commit("old", dir), EXIT_OK);
    killed_commit(dir, "moved-old", true);
    assert_string_equal(folder_state(dir), "missing");
    assert_int_equal(leftovers("fallback"), 2); /* .old-PID and .partial-PID */
    output_without_exchange = true;
    output_step_hook = NULL;
    char stray[160];
    assert_int_equal(commit("new", dir), EXIT_OK);
    assert_string_equal(folder_state(dir), "new");
    assert_int_equal(leftovers("fallback"), 0);
    killed_commit(dir, "moved-new", true);
    assert_string_equal(folder_state(dir), "new");
    assert_int_equal(leftovers("fallback"), 1); /* the old folder, not yet removed */
    assert_int_equal(commit("old", dir), EXIT_OK);
    assert_string_equal(folder_state(dir), "old");
    assert_int_equal(leftovers("fallback"), 0);
    output_without_exchange = false;
    /* A stray file makes the folder the user's: refused, left as it was. */
    snprintf(stray, sizeof stray, "%s/notes.txt", dir);
    FILE *f = fopen(stray, "w");
    fputs("mine\n", f);
    fclose(f);
    assert_int_equal(commit("new", dir), EXIT_USER_ERROR);
    assert_string_equal(folder_state(dir), "old");
    assert_int_equal(access(stray, F_OK), 0);
}

/* ---- a data file changed while it is read ------------------------------- */

static const char *change_path;
static int change_kind; /* 0 truncate, 1 same-size edit, 2 append */

static void change_hook(const char *path, size_t done)
{
    if (!change_path || strcmp(path, change_path) != 0 || done < ((size_t)1 << 20))
        return;
    int fd = open(path, O_WRONLY);
    assert_true(fd >= 0);
    if (change_kind == 0)
        assert_int_equal(ftruncate(fd, 1000), 0);
    else if (change_kind == 1)
        assert_int_equal(pwrite(fd, "9", 1, 2000000), 1);
    else
        assert_int_equal(pwrite(fd, "1,2\n", 4, 4000000), 4);
    close(fd);
    change_path = NULL; /* once */
}

/* A data file of about 3 MB whose modification time is an hour old, so
   that a change by the hook is seen even within one clock tick. */
static void write_data(const char *path)
{
    FILE *f = fopen(path, "w");
    assert_non_null(f);
    fputs("x,y\n", f);
    for (int i = 0; i < 300000; i++)
        fprintf(f, "%d,%d\n", i % 1000, i % 777);
    fclose(f);
    struct timespec old[2] = {{time(NULL) - 3600, 0}, {time(NULL) - 3600, 0}};
    assert_int_equal(utimensat(AT_FDCWD, path, old, 0), 0);
}

static void test_data_changed_while_read(void **state)
{
    (void)state;
    char spec_path[128], data_path[128];
    snprintf(spec_path, sizeof spec_path, "%s/s.yaml", root);
    snprintf(data_path, sizeof data_path, "%s/d.csv", root);
    const char *yaml = "fitproof: 1\ndata: {path: d.csv}\nmodels: [{id: m, response: y, "
                       "terms: [x]}]\n";
    for (int kind = 0; kind < 3; kind++) {
        write_data(data_path);
        error_list errors;
        error_list_init(&errors);
        spec *s = spec_parse(spec_path, yaml, strlen(yaml), &errors);
        assert_non_null(s);
        change_path = data_path;
        change_kind = kind;
        file_read_hook = change_hook;
        data_table *t = data_load(s, &errors);
        file_read_hook = NULL;
        assert_null(t);
        assert_int_equal(errors.count, 1);
        char want[512];
        snprintf(
            want, sizeof want,
            "%s:2:14: error: cannot read the data file '%s': the file changed while it "
            "was read; read it again when nothing is writing to it",
            spec_path, data_path);
        assert_string_equal(errors.messages[0], want);
        error_list_free(&errors);
        spec_free(s);
    }
    /* Unchanged, it reads. */
    write_data(data_path);
    error_list errors;
    error_list_init(&errors);
    spec *s = spec_parse(spec_path, yaml, strlen(yaml), &errors);
    data_table *t = data_load(s, &errors);
    assert_non_null(t);
    assert_int_equal(t->n_rows, 300000);
    data_table_free(t);
    spec_free(s);
    error_list_free(&errors);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_killed_at_each_step),
        cmocka_unit_test(test_fallback_without_exchange),
        cmocka_unit_test(test_data_changed_while_read),
    };
    return cmocka_run_group_tests_name("safety", tests, make_root, remove_root);
}
