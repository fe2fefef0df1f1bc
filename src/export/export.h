/*
 * export.h — optional exports through pandoc, an external program: the
 * Markdown report (with its figures) turned into PDF or DOCX when
 * report.formats asks for them. fitproof never needs pandoc otherwise.
 */
#ifndef FITPROOF_EXPORT_H
#define FITPROOF_EXPORT_H

#include "../output/output.h"
#include "../spec/spec.h"

/* Checks, before anything is computed, that the programs the requested
   exports need are installed; records a located error naming what is
   missing otherwise. */
bool export_check(const spec *s, error_list *errors);

/* Runs pandoc on report.md (and the figures) in set and adds report.pdf /
   report.docx to set. Returns an exit status; a failing pandoc is an
   internal error with its message. */
int export_run(const spec *s, output_set *set, error_list *errors);

#endif
