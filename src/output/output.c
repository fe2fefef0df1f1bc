/*
 * output.c — atomic replacement of the output folder.
 */
#define _XOPEN_SOURCE 700
#include "output.h"

#include <dirent.h>
#include <errno.h>
#include <ftw.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

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
    FILE *f = fopen(path, "wb");
    if (!f)
        return false;
    bool ok = fwrite(file->bytes, 1, file->length, f) == file->length;
    ok = fflush(f) == 0 && ok;
    ok = fsync(fileno(f)) == 0 && ok;
    return fclose(f) == 0 && ok;
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

/* An existing folder is replaced only if fitproof wrote it (it holds a
   manifest.json) or it is empty, so a mistyped -o cannot wipe other work. */
static bool replaceable(const char *dir)
{
    DIR *d = opendir(dir);
    if (!d)
        return false;
    bool empty = true, ours = false;
    struct dirent *entry;
    while ((entry = readdir(d)) != NULL) {
        if (strcmp(entry->d_name, ".") == 0 || strcmp(entry->d_name, "..") == 0)
            continue;
        empty = false;
        ours = ours || strcmp(entry->d_name, "manifest.json") == 0;
    }
    closedir(d);
    return empty || ours;
}

bool output_check_target(const char *dir, error_list *errors)
{
    src_mark whole = {0, 0};
    struct stat existing;
    if (stat(dir, &existing) != 0)
        return true;
    if (!S_ISDIR(existing.st_mode)) {
        error_at(errors, dir, whole, "this is a file, not a folder; -o names the folder the "
                 "report is written into: choose a new folder name");
        return false;
    }
    if (!replaceable(dir)) {
        error_at(errors, dir, whole, "this folder exists and was not written by "
                 "fitproof; choose an empty or new folder with -o");
        return false;
    }
    return true;
}

int output_commit(const output_set *set, const char *dir, error_list *errors)
{
    src_mark whole = {0, 0};
    buf staging, old;
    buf_init(&staging);
    buf_init(&old);
    buf_printf(&staging, "%s.partial-%ld", dir, (long)getpid());
    buf_printf(&old, "%s.old-%ld", dir, (long)getpid());
    remove_tree(staging.data);
    int status = EXIT_USER_ERROR;
    const char *failed = NULL;
    if (!output_check_target(dir, errors)) {
        /* said */
    } else if (mkdir(staging.data, 0777) != 0) {
        error_at(errors, dir, whole, "cannot create the output folder: %s; choose "
                   "another place with -o", strerror(errno));
    } else if (!write_all(set, staging.data, &failed)) {
        error_at(errors, dir, whole, "cannot write %s: %s; nothing was changed",
                   failed ? failed : "a file", strerror(errno));
        remove_tree(staging.data);
        status = EXIT_INTERNAL;
    } else {
        struct stat info;
        bool had_old = stat(dir, &info) == 0;
        if (had_old && rename(dir, old.data) != 0) {
            error_at(errors, dir, whole, "cannot replace the existing folder: %s",
                       strerror(errno));
            remove_tree(staging.data);
        } else if (rename(staging.data, dir) != 0) {
            error_at(errors, dir, whole, "cannot move the new report into place: %s",
                       strerror(errno));
            if (had_old)
                rename(old.data, dir);
            remove_tree(staging.data);
        } else {
            if (had_old)
                remove_tree(old.data);
            status = EXIT_OK;
        }
    }
    buf_free(&staging);
    buf_free(&old);
    return status;
}
