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

/* Whether dir can become the report folder (it is new, empty, or a
   folder fitproof wrote); false after recording why (a file of that name,
   a folder of other files). build asks before computing anything. */
bool output_check_target(const char *dir, error_list *errors);

#endif
