/*
 * output.h — the output folder, written all at once or not at all. Files
 * are collected in memory, written into a fresh staging folder beside the
 * target, and swapped into place in one step (renameat2 RENAME_EXCHANGE);
 * an existing folder is replaced only when it is a fitproof report (its
 * manifest lists exactly the files it holds), and never when it holds the
 * spec or its data. Concurrent builds of one folder take turns (a lock on
 * the parent folder); staging folders left by a killed build are removed by
 * the next one.
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
/* Index of the file called name, or SIZE_MAX. */
size_t output_find(const output_set *set, const char *name);

/* Writes every file into dir. inputs (n_inputs paths, NULL entries
   skipped) are the files the build read: dir may not be a folder that
   holds any of them. Returns EXIT_OK, or after recording a message in
   errors, EXIT_USER_ERROR when dir cannot be used (it exists and is not a
   fitproof report, it holds an input, or cannot be created) and
   EXIT_INTERNAL when writing fails midway (a full disk, a file size
   limit). dir is left as it was on failure. */
int output_commit(const output_set *set, const char *dir, const char *const *inputs,
                  size_t n_inputs, error_list *errors);

/* Whether dir is a report folder fitproof wrote: its manifest.json has the
   manifest format and lists exactly the files the folder holds (besides
   itself). On false, *why (static text) or *stray (the first unlisted
   file; caller frees) says why. */
bool output_is_report(const char *dir, const char **why, char **stray);

/* The files in dir and its subfolders, relative to dir, sorted; entries
   that are neither regular files nor folders are listed with a trailing
   '?' so they never match an output name. Caller frees each and the
   array. */
char **output_list_folder(const char *dir, size_t *count);

/* ---- fault injection, for the tests only (both NULL/false in use) ------ */
/* Called at each step of output_commit by name: "locked", "staged",
   "exchanged", "moved-old", "moved-new". */
extern void (*output_step_hook)(const char *step);
/* Forces the fallback of two renames, as on a file system without
   RENAME_EXCHANGE. */
extern bool output_without_exchange;

/* Whether dir can become the report folder (it is new, empty, or a
   folder fitproof wrote); false after recording why (a file of that name,
   a folder of other files). build asks before computing anything. */
bool output_check_target(const char *dir, const char *const *inputs, size_t n_inputs,
                         error_list *errors);

/* Writes one file at path through a temporary name and a rename, so that
   it appears whole or not at all. Returns EXIT_OK, or after recording a
   message, EXIT_USER_ERROR (path names a folder, or cannot be created) or
   EXIT_INTERNAL (the write failed; an older file at path is kept). */
int output_write_file(const char *path, const char *bytes, size_t length, error_list *errors);

#endif
