/*
 * template.c — fills {{name}} placeholders of a page template. The syntax
 * is deliberately tiny: no conditionals, no loops, no escaping rules of its
 * own; the values are whole rendered pieces.
 */
#include "render.h"

#include <string.h>

static const render_var *find_var(const render_var *vars, size_t n_vars, const char *name,
                                  size_t length)
{
    for (size_t i = 0; i < n_vars; i++)
        if (strlen(vars[i].name) == length && memcmp(vars[i].name, name, length) == 0)
            return &vars[i];
    return NULL;
}

void render_template(const char *template_text, const render_var *vars, size_t n_vars,
                     buf *out)
{
    const char *p = template_text;
    for (;;) {
        const char *open = strstr(p, "{{");
        const char *close = open ? strstr(open + 2, "}}") : NULL;
        if (!close) {
            buf_puts(out, p);
            return;
        }
        buf_put(out, p, (size_t)(open - p));
        const render_var *var =
            find_var(vars, n_vars, open + 2, (size_t)(close - open - 2));
        if (var)
            buf_puts(out, var->value);
        else
            buf_put(out, open, (size_t)(close + 2 - open));
        p = close + 2;
    }
}

void render_css_string(buf *out, const char *text)
{
    for (const unsigned char *p = (const unsigned char *)(text ? text : ""); *p; p++) {
        /* Quotes and backslashes end or escape the string; '<' and '>' could
           close the <style> element; controls and '&' are written as hex
           escapes, with the space that ends one. */
        if (*p == '"' || *p == '\\' || *p == '<' || *p == '>' || *p == '&' || *p < 0x20 ||
            *p == 0x7f)
            buf_printf(out, "\\%x ", *p);
        else
            buf_putc(out, (char)*p);
    }
}
