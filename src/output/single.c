/*
 * single.c — one output file written all at once or not at all: the
 * bytes go to a temporary name beside the target, are flushed to disk,
 * and the temporary file is renamed over the target, so a reader never
 * sees half a file and a failed write leaves the old one.
 */
#define _XOPEN_SOURCE 700
#include "output.h"

#include <errno.h>
#include <stdio.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

int output_write_file(const char *path, const char *bytes, size_t length, error_list *errors)
{
    src_mark whole = {0, 0};
    struct stat existing;
    if (stat(path, &existing) == 0 && !S_ISREG(existing.st_mode)) {
        error_at(errors, path, whole, "this exists and is not a regular file; choose a file "
                                      "name with -o");
        return EXIT_USER_ERROR;
    }
    buf temporary;
    buf_init(&temporary);
    buf_printf(&temporary, "%s.partial-%ld", path, (long)getpid());
    FILE *f = fopen(temporary.data, "wb");
    int status = EXIT_OK;
    if (!f) {
        error_at(errors, path, whole, "cannot create the file: %s; choose another place with -o",
                 strerror(errno));
        status = EXIT_USER_ERROR;
    } else {
        bool ok = fwrite(bytes, 1, length, f) == length;
        ok = fflush(f) == 0 && ok;
        ok = fsync(fileno(f)) == 0 && ok;
        ok = fclose(f) == 0 && ok;
        if (!ok || rename(temporary.data, path) != 0) {
            error_at(errors, path, whole, "cannot write the file: %s; nothing was changed",
                     strerror(errno));
            remove(temporary.data);
            status = EXIT_INTERNAL;
        }
    }
    buf_free(&temporary);
    return status;
}
