/*
 * output.c — the output folder replaced all at once or not at all.
 *
 * Under a lock on the parent folder (flock, so concurrent builds of one
 * folder take turns and a killed build's lock goes with it), a commit
 *   1. removes staging folders a killed build left (NAME.partial-PID,
 *      NAME.old-PID; none can belong to a live build, which would hold the
 *      lock), first moving NAME.old-PID back when NAME itself is missing;
 *   2. refuses a NAME that is not a fitproof report or that holds an input;
 *   3. writes every file into NAME.partial-PID;
 *   4. swaps it with NAME in one step (renameat2 RENAME_EXCHANGE) and
 *      removes the old folder, now under the staging name.
 * Where the file system has no RENAME_EXCHANGE (EINVAL, ENOSYS, ENOTSUP),
 * step 4 falls back to two renames, NAME → NAME.old-PID and the staging
 * folder → NAME; a kill between them leaves no NAME for a moment, and the
 * next commit (step 1) moves the old folder back.
 */
#define _GNU_SOURCE /* renameat2, RENAME_EXCHANGE */
#include "output.h"

#include <dirent.h>
#include <errno.h>
#include <fcntl.h>
#include <ftw.h>
#include <limits.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/file.h>
#include <sys/stat.h>
#include <unistd.h>

#include "../audit/audit.h"

void (*output_step_hook)(const char *step) = NULL;
bool output_without_exchange = false;

typedef struct {
    char *name;
    char *bytes;
    size_t length;
} output_file;

struct output_set {
    output_file *files;
    size_t count;
    size_t capacity;
};

output_set *output_set_new(void)
{
    return xcalloc(1, sizeof(output_set));
}

void output_set_free(output_set *set)
{
    if (!set)
        return;
    for (size_t i = 0; i < set->count; i++) {
        free(set->files[i].name);
        free(set->files[i].bytes);
    }
    free(set->files);
    free(set);
}

void output_add(output_set *set, const char *name, char *bytes, size_t length)
{
    xgrow((void **)&set->files, &set->capacity, set->count + 1, sizeof(output_file));
    set->files[set->count++] = (output_file){xstrdup(name), bytes, length};
}

size_t output_count(const output_set *set)
{
    return set->count;
}

void output_get(const output_set *set, size_t i, const char **name, const char **bytes,
                size_t *length)
{
    *name = set->files[i].name;
    *bytes = set->files[i].bytes;
    *length = set->files[i].length;
}

size_t output_find(const output_set *set, const char *name)
{
    for (size_t i = 0; i < set->count; i++)
        if (strcmp(set->files[i].name, name) == 0)
            return i;
    return SIZE_MAX;
}

static void step(const char *name)
{
    if (output_step_hook)
        output_step_hook(name);
}

/* ---- the folder's files ------------------------------------------------ */

typedef struct {
    char **names;
    size_t count;
    size_t capacity;
} name_list;

static void list_add(name_list *list, char *name)
{
    xgrow((void **)&list->names, &list->capacity, list->count + 1, sizeof(char *));
    list->names[list->count++] = name;
}

/* Depth below the folder that a report can have (figures/x.svg is 1);
   anything deeper is listed as the folder it is in. */
#define LIST_DEPTH 2

static void list_walk(const char *path, const char *relative, int depth, name_list *list)
{
    DIR *d = opendir(path);
    if (!d)
        return;
    struct dirent *entry;
    bool empty = true;
    while ((entry = readdir(d)) != NULL) {
        if (strcmp(entry->d_name, ".") == 0 || strcmp(entry->d_name, "..") == 0)
            continue;
        empty = false;
        buf full, name;
        buf_init(&full);
        buf_init(&name);
        buf_printf(&full, "%s/%s", path, entry->d_name);
        buf_printf(&name, "%s%s%s", relative, *relative ? "/" : "", entry->d_name);
        struct stat info;
        if (lstat(full.data, &info) != 0 ||
            (!S_ISREG(info.st_mode) && !S_ISDIR(info.st_mode))) {
            buf_putc(&name, '?');
            list_add(list, buf_detach(&name));
        } else if (S_ISDIR(info.st_mode) && depth + 1 < LIST_DEPTH) {
            list_walk(full.data, name.data, depth + 1, list);
        } else if (S_ISDIR(info.st_mode)) {
            buf_putc(&name, '/');
            list_add(list, buf_detach(&name));
        } else {
            list_add(list, buf_detach(&name));
        }
        buf_free(&full);
        buf_free(&name);
    }
    closedir(d);
    if (empty && *relative) {
        /* An empty subfolder is something the build did not make. */
        buf name;
        buf_init(&name);
        buf_printf(&name, "%s/", relative);
        list_add(list, buf_detach(&name));
    }
}

static int compare_names(const void *a, const void *b)
{
    return strcmp(*(char *const *)a, *(char *const *)b);
}

char **output_list_folder(const char *dir, size_t *count)
{
    name_list list = {0};
    list_walk(dir, "", 0, &list);
    if (list.count)
        qsort(list.names, list.count, sizeof(char *), compare_names);
    *count = list.count;
    return list.names;
}

static void free_names(char **names, size_t count)
{
    for (size_t i = 0; i < count; i++)
        free(names[i]);
    free(names);
}

bool output_is_report(const char *dir, const char **why, char **stray)
{
    *why = NULL;
    *stray = NULL;
    error_list quiet;
    error_list_init(&quiet);
    audit_manifest *m = audit_manifest_read(dir, &quiet);
    error_list_free(&quiet);
    if (!m) {
        *why = "its manifest.json is missing or is not a fitproof manifest";
        return false;
    }
    size_t count;
    char **names = output_list_folder(dir, &count);
    for (size_t i = 0; i < count && !*stray; i++) {
        bool listed = strcmp(names[i], "manifest.json") == 0 ||
                      strcmp(names[i], AUDIT_SIGNATURE_FILE) == 0 ||
                      audit_manifest_find(m, names[i]);
        if (!listed)
            *stray = xstrdup(names[i]);
    }
    free_names(names, count);
    audit_manifest_free(m);
    return !*stray;
}

/* ---- writing ----------------------------------------------------------- */

static int remove_entry(const char *path, const struct stat *info, int flag,
                        struct FTW *walk)
{
    (void)info;
    (void)flag;
    (void)walk;
    return remove(path);
}

static void remove_tree(const char *path)
{
    nftw(path, remove_entry, 16, FTW_DEPTH | FTW_PHYS);
}

static bool write_file(const char *path, const output_file *file)
{
    int fd = open(path, O_WRONLY | O_CREAT | O_EXCL | O_CLOEXEC, 0666);
    if (fd < 0)
        return false;
    size_t done = 0;
    while (done < file->length) {
        ssize_t wrote = write(fd, file->bytes + done, file->length - done);
        if (wrote < 0 && errno == EINTR)
            continue;
        if (wrote <= 0) {
            int saved = wrote < 0 ? errno : ENOSPC;
            close(fd);
            errno = saved;
            return false;
        }
        done += (size_t)wrote;
    }
    if (fsync(fd) != 0) {
        int saved = errno;
        close(fd);
        errno = saved;
        return false;
    }
    return close(fd) == 0;
}

static bool write_all(const output_set *set, const char *staging, const char **failed)
{
    buf path;
    buf_init(&path);
    bool ok = true;
    for (size_t i = 0; ok && i < set->count; i++) {
        const char *slash = strchr(set->files[i].name, '/');
        if (slash) {
            buf_reset(&path);
            buf_printf(&path, "%s/%.*s", staging, (int)(slash - set->files[i].name),
                       set->files[i].name);
            if (mkdir(path.data, 0777) != 0 && errno != EEXIST)
                ok = false;
        }
        buf_reset(&path);
        buf_printf(&path, "%s/%s", staging, set->files[i].name);
        ok = ok && write_file(path.data, &set->files[i]);
        if (!ok)
            *failed = set->files[i].name;
    }
    buf_free(&path);
    return ok;
}

/* ---- where the folder goes ---------------------------------------------- */

typedef struct {
    char *parent; /* the parent folder, resolved */
    char *name;   /* the folder's own name in it */
    char *full;   /* parent/name */
} target;

static void target_free(target *t)
{
    free(t->parent);
    free(t->name);
    free(t->full);
}

/* Splits dir into its resolved parent and its name; "." and ".." and
   trailing slashes are resolved first. False when the parent does not
   exist. */
static bool target_resolve(const char *dir, target *t)
{
    memset(t, 0, sizeof *t);
    char *copy = xstrdup(dir);
    size_t length = strlen(copy);
    while (length > 1 && copy[length - 1] == '/')
        copy[--length] = '\0';
    char *base = strrchr(copy, '/');
    const char *name = base ? base + 1 : copy;
    char *resolved = NULL;
    if (strcmp(name, ".") == 0 || strcmp(name, "..") == 0 || strcmp(copy, "/") == 0) {
        resolved = realpath(copy, NULL);
    } else {
        char *parent = path_dirname(copy);
        char *real_parent = realpath(parent, NULL);
        free(parent);
        if (real_parent) {
            buf joined;
            buf_init(&joined);
            buf_printf(&joined, "%s/%s", strcmp(real_parent, "/") == 0 ? "" : real_parent,
                       name);
            resolved = buf_detach(&joined);
            free(real_parent);
        }
    }
    free(copy);
    if (!resolved)
        return false;
    char *slash = strrchr(resolved, '/');
    if (!slash || slash[1] == '\0') {
        free(resolved);
        return false; /* the root folder itself */
    }
    t->full = resolved;
    t->parent =
        slash == resolved ? xstrdup("/") : xstrndup(resolved, (size_t)(slash - resolved));
    t->name = xstrdup(slash + 1);
    return true;
}

/* The first input the folder full holds (borrowed), or NULL. */
static const char *held_input(const char *full, const char *const *inputs, size_t n_inputs)
{
    size_t length = strlen(full);
    for (size_t i = 0; i < n_inputs; i++) {
        if (!inputs[i])
            continue;
        char *real = realpath(inputs[i], NULL);
        bool inside = real && strncmp(real, full, length) == 0 &&
                      (real[length] == '/' || real[length] == '\0');
        free(real);
        if (inside)
            return inputs[i];
    }
    return NULL;
}

/* NAME.partial-PID or NAME.old-PID (digits only after the dash). */
static bool is_staging_name(const char *entry, const char *name, bool *is_old)
{
    size_t length = strlen(name);
    if (strncmp(entry, name, length) != 0)
        return false;
    const char *rest = entry + length;
    const char *digits;
    if (strncmp(rest, ".partial-", 9) == 0) {
        digits = rest + 9;
        *is_old = false;
    } else if (strncmp(rest, ".old-", 5) == 0) {
        digits = rest + 5;
        *is_old = true;
    } else {
        return false;
    }
    if (!*digits)
        return false;
    for (const char *c = digits; *c; c++)
        if (*c < '0' || *c > '9')
            return false;
    return true;
}

/* Step 1: what a killed build left beside the folder. Called under the
   lock, so no live build owns any of it. */
static void remove_stale(const target *t)
{
    DIR *d = opendir(t->parent);
    if (!d)
        return;
    name_list stale = {0};
    struct dirent *entry;
    bool missing = faccessat(AT_FDCWD, t->full, F_OK, AT_SYMLINK_NOFOLLOW) != 0;
    while ((entry = readdir(d)) != NULL) {
        bool is_old;
        if (!is_staging_name(entry->d_name, t->name, &is_old))
            continue;
        char *path = path_join(t->parent, entry->d_name);
        /* A kill between the fallback's two renames: the old folder goes
           back to its name. */
        if (is_old && missing && rename(path, t->full) == 0)
            missing = false, free(path);
        else
            list_add(&stale, path);
    }
    closedir(d);
    for (size_t i = 0; i < stale.count; i++)
        remove_tree(stale.names[i]);
    free_names(stale.names, stale.count);
}

/* Step 2: may the folder be replaced? Records the reason when not. */
static bool may_replace(const target *t, const char *dir, const char *const *inputs,
                        size_t n_inputs, error_list *errors)
{
    src_mark whole = {0, 0};
    struct stat info;
    if (lstat(t->full, &info) != 0)
        return true; /* a new folder */
    if (S_ISLNK(info.st_mode)) {
        error_at(errors, dir, whole,
                 "this is a symbolic link; give the folder's own path "
                 "with -o");
        return false;
    }
    if (!S_ISDIR(info.st_mode)) {
        error_at(errors, dir, whole,
                 "this is a file, not a folder; -o names the folder the report is written "
                 "into: choose an empty or new folder");
        return false;
    }
    const char *input = held_input(t->full, inputs, n_inputs);
    if (input) {
        error_at(errors, dir, whole,
                 "this folder holds '%s', which the build reads; choose a "
                 "folder for the report that holds neither the spec nor its data, with -o",
                 input);
        return false;
    }
    size_t count;
    char **names = output_list_folder(t->full, &count);
    free_names(names, count);
    if (count == 0)
        return true;
    const char *why;
    char *stray;
    if (output_is_report(t->full, &why, &stray))
        return true;
    if (stray)
        error_at(
            errors, dir, whole,
            "this folder holds '%s', which its manifest.json does not "
            "list, so fitproof did not write it; choose an empty or new folder with -o",
            stray);
    else
        error_at(errors, dir, whole,
                 "this folder exists and was not written by fitproof; "
                 "choose an empty or new folder with -o");
    free(stray);
    return false;
}

bool output_check_target(const char *dir, const char *const *inputs, size_t n_inputs,
                         error_list *errors)
{
    target t;
    if (!target_resolve(dir, &t))
        return true; /* the commit says why the folder cannot be made */
    /* Checked again, with the lock held, when committing. */
    bool ok = may_replace(&t, dir, inputs, n_inputs, errors);
    target_free(&t);
    return ok;
}

static bool exchange_unsupported(int error)
{
    return error == EINVAL || error == ENOSYS || error == ENOTSUP;
}

/* Step 4: the staging folder takes the folder's name. */
static bool swap_in(const target *t, const char *staging, const char *dir,
                    error_list *errors)
{
    src_mark whole = {0, 0};
    struct stat info;
    if (lstat(t->full, &info) != 0) {
        if (rename(staging, t->full) == 0)
            return true;
        error_at(errors, dir, whole, "cannot move the new report into place: %s",
                 strerror(errno));
        return false;
    }
    if (!output_without_exchange) {
        if (renameat2(AT_FDCWD, staging, AT_FDCWD, t->full, RENAME_EXCHANGE) == 0) {
            step("exchanged");
            remove_tree(staging); /* the old report, under the staging name */
            return true;
        }
        if (!exchange_unsupported(errno)) {
            error_at(errors, dir, whole, "cannot replace the existing folder: %s",
                     strerror(errno));
            return false;
        }
    }
    buf old;
    buf_init(&old);
    buf_printf(&old, "%s.old-%ld", t->full, (long)getpid());
    bool ok = false;
    if (rename(t->full, old.data) != 0) {
        error_at(errors, dir, whole, "cannot replace the existing folder: %s",
                 strerror(errno));
    } else {
        step("moved-old");
        if (rename(staging, t->full) != 0) {
            error_at(errors, dir, whole, "cannot move the new report into place: %s",
                     strerror(errno));
            rename(old.data, t->full);
        } else {
            step("moved-new");
            remove_tree(old.data);
            ok = true;
        }
    }
    buf_free(&old);
    return ok;
}

int output_commit(const output_set *set, const char *dir, const char *const *inputs,
                  size_t n_inputs, error_list *errors)
{
    src_mark whole = {0, 0};
    target t;
    if (!target_resolve(dir, &t)) {
        error_at(errors, dir, whole,
                 "cannot create the output folder: its parent folder does "
                 "not exist; create it first or choose another place "
                 "with -o");
        return EXIT_USER_ERROR;
    }
    int lock = open(t.parent, O_RDONLY | O_DIRECTORY | O_CLOEXEC);
    if (lock < 0 || flock(lock, LOCK_EX) != 0) {
        error_at(errors, dir, whole,
                 "cannot use the folder it goes in: %s; choose another "
                 "place with -o",
                 strerror(errno));
        if (lock >= 0)
            close(lock);
        target_free(&t);
        return EXIT_USER_ERROR;
    }
    step("locked");
    remove_stale(&t);
    buf staging;
    buf_init(&staging);
    buf_printf(&staging, "%s.partial-%ld", t.full, (long)getpid());
    int status = EXIT_USER_ERROR;
    const char *failed = NULL;
    if (!may_replace(&t, dir, inputs, n_inputs, errors)) {
        /* refused; the reason is recorded */
    } else if (mkdir(staging.data, 0777) != 0) {
        error_at(errors, dir, whole,
                 "cannot create the output folder: %s; choose "
                 "another place with -o",
                 strerror(errno));
    } else if (!write_all(set, staging.data, &failed)) {
        error_at(errors, dir, whole, "cannot write %s: %s; nothing was changed",
                 failed ? failed : "a file", strerror(errno));
        remove_tree(staging.data);
        status = EXIT_INTERNAL;
    } else {
        step("staged");
        if (swap_in(&t, staging.data, dir, errors)) {
            fsync(lock);
            status = EXIT_OK;
        } else {
            remove_tree(staging.data);
        }
    }
    close(lock); /* and with it the lock */
    buf_free(&staging);
    target_free(&t);
    return status;
}
