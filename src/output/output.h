/*
 * output.h — the output folder, written all at once or not at all. Files
 * are collected in memory, written into a fresh staging folder beside the
 * target, and the staging folder is renamed into place; an older folder of
 * the same name is replaced only after the new one is complete.
 */
#ifndef FITPROOF_OUTPUT_H
#define FITPROOF_OUTPUT_H

#include "../util/util.h"

typedef struct output_set output_set;

output_set *output_set_new(void);
void output_set_free(output_set *set);
/* Adds a file (name relative to the folder; a single level of
   subfolder is allowed, as in "figures/x.svg"). Takes the bytes (they are
   freed with the set). */
void output_add(output_set *set, const char *name, char *bytes, size_t length);

/* Number of files in the set, and file i (borrowed). */
size_t output_count(const output_set *set);
void output_get(const output_set *set, size_t i, const char **name, const char **bytes,
                size_t *length);

/* Writes every file into dir. Returns EXIT_OK, or after recording a message
   in errors, EXIT_USER_ERROR when dir cannot be used (it exists and is not
   a report folder, or cannot be created) and EXIT_INTERNAL when writing
   fails midway (a full disk). dir is left as it was on failure. */
int output_commit(const output_set *set, const char *dir, error_list *errors);

/* Writes one file at path through a temporary name and a rename, so that
   it appears whole or not at all. Returns EXIT_OK, or after recording a
   message, EXIT_USER_ERROR (path names a folder, or cannot be created) or
   EXIT_INTERNAL (the write failed; an older file at path is kept). */
int output_write_file(const char *path, const char *bytes, size_t length, error_list *errors);

#endif
