/*
 * postgres.c — data: {postgres: CONNECTION, query: …}. Not built yet: the
 * spec stage accepts the keys, and loading refuses them at the spec.
 */
#include "sql.h"

data_table *data_load_postgres(const spec *s, unsigned flags, error_list *errors)
{
    (void)flags;
    error_at(errors, s->path, s->data.connection_at,
             "this fitproof cannot read PostgreSQL yet; export the rows to CSV");
    return NULL;
}
