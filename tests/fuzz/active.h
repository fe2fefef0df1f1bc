/*
 * active.h — for the fuzz targets: finds active markup in HTML or SVG
 * that fitproof wrote, which no user string may ever produce: an element
 * outside the few a report uses, an event-handler attribute (on…=), or a
 * javascript:/vbscript: address or a data: address other than an inline
 * SVG or raster image in an href, src or action (after character
 * references are decoded, as a browser would). Returns what was found (static text) or
 * NULL.
 */
#ifndef FITPROOF_FUZZ_ACTIVE_H
#define FITPROOF_FUZZ_ACTIVE_H

#include <ctype.h>
#include <stdbool.h>
#include <stdlib.h>
#include <string.h>

static const char *const active_allowed_tags[] = {
    /* HTML the page template and renderers use */
    "html", "head", "meta", "title", "style", "body", "div", "p", "h1", "h2", "h3", "h4",
    "h5", "h6", "strong", "em", "code", "pre", "ul", "ol", "li", "table", "thead", "tbody",
    "tr", "th", "td", "a", "img", "span", "caption", "figure", "figcaption", "section",
    "nav", "br", "hr", "blockquote", "sup", "sub", "small", "del", "header", "footer",
    "main", "dl", "dt", "dd",
    /* SVG the figures use */
    "svg", "g", "path", "line", "rect", "circle", "text", "tspan", "polyline", "polygon",
    "desc", "defs", "clippath", "marker", "?xml", NULL};

/* The tag's text with character references decoded, lower-cased, with
   whitespace and control characters dropped (as browsers ignore them in
   a scheme). Caller frees. */
static char *active_squeeze(const char *tag, size_t length)
{
    char *out = malloc(length + 1);
    size_t n = 0;
    for (size_t i = 0; i < length; i++) {
        unsigned long code = (unsigned char)tag[i];
        if (tag[i] == '&' && i + 2 < length && tag[i + 1] == '#') {
            size_t k = i + 2;
            int base = 10;
            if (tag[k] == 'x' || tag[k] == 'X')
                base = 16, k++;
            char *end;
            code = strtoul(tag + k, &end, base);
            i = (size_t)(end - tag);
            if (i < length && tag[i] != ';')
                i--;
        }
        if (code <= ' ' || code == 127)
            continue;
        out[n++] = code < 128 ? (char)tolower((int)code) : '?';
    }
    out[n] = '\0';
    return out;
}

static bool active_same_name(const char *a, const char *b, size_t length)
{
    for (size_t i = 0; i < length; i++)
        if (!a[i] || tolower((unsigned char)a[i]) != tolower((unsigned char)b[i]))
            return false;
    return a[length] == '\0';
}

static const char *active_markup(const char *text, size_t length)
{
    for (size_t i = 0; i < length; i++) {
        if (text[i] != '<' || i + 1 >= length)
            continue;
        size_t start = i + 1;
        if (text[start] == '/' || text[start] == '!')
            continue; /* closing tags, comments and <!DOCTYPE> */
        if (!isalpha((unsigned char)text[start]) && text[start] != '?')
            continue; /* not a tag: a bare '<' in text would be escaped anyway */
        size_t end = start;
        bool quoted = false;
        char quote = 0;
        while (end < length && (quoted || text[end] != '>')) {
            if (!quoted && (text[end] == '"' || text[end] == '\''))
                quoted = true, quote = text[end];
            else if (quoted && text[end] == quote)
                quoted = false;
            end++;
        }
        size_t name_end = start;
        while (name_end < end && !isspace((unsigned char)text[name_end]) &&
               text[name_end] != '/' && text[name_end] != '>')
            name_end++;
        bool known = false;
        for (size_t k = 0; active_allowed_tags[k] && !known; k++)
            known =
                active_same_name(active_allowed_tags[k], text + start, name_end - start);
        if (!known)
            return "an element a report never uses";
        /* Attributes: NAME, NAME=VALUE, NAME="VALUE" or NAME='VALUE'. */
        for (size_t k = name_end; k < end;) {
            while (k < end && (isspace((unsigned char)text[k]) || text[k] == '/'))
                k++;
            size_t attribute = k;
            while (k < end && !isspace((unsigned char)text[k]) && text[k] != '=' &&
                   text[k] != '/')
                k++;
            size_t attribute_end = k;
            size_t value = k, value_end = k;
            if (k < end && text[k] == '=') {
                k++;
                if (k < end && (text[k] == '"' || text[k] == '\'')) {
                    char quote = text[k++];
                    value = k;
                    while (k < end && text[k] != quote)
                        k++;
                    value_end = k;
                    if (k < end)
                        k++;
                } else {
                    value = k;
                    while (k < end && !isspace((unsigned char)text[k]))
                        k++;
                    value_end = k;
                }
            }
            if (attribute_end == attribute) {
                k++;
                continue;
            }
            size_t name_length = attribute_end - attribute;
            if (name_length > 2 && tolower((unsigned char)text[attribute]) == 'o' &&
                tolower((unsigned char)text[attribute + 1]) == 'n')
                return "an event-handler attribute";
            bool address = active_same_name("href", text + attribute, name_length) ||
                           active_same_name("src", text + attribute, name_length) ||
                           active_same_name("action", text + attribute, name_length) ||
                           active_same_name("xlink:href", text + attribute, name_length);
            if (!address)
                continue;
            char *squeezed = active_squeeze(text + value, value_end - value);
            const char *found = NULL;
            if (strncmp(squeezed, "javascript:", 11) == 0 ||
                strncmp(squeezed, "vbscript:", 9) == 0)
                found = "a script address";
            else if (strncmp(squeezed, "data:", 5) == 0 &&
                     strncmp(squeezed, "data:image/svg+xml;base64,", 26) != 0 &&
                     strncmp(squeezed, "data:image/png", 14) != 0 &&
                     strncmp(squeezed, "data:image/gif", 14) != 0 &&
                     strncmp(squeezed, "data:image/jpeg", 15) != 0 &&
                     strncmp(squeezed, "data:image/webp", 15) != 0)
                found = "a data: address that is not an image";
            free(squeezed);
            if (found)
                return found;
        }
        i = end;
    }
    return NULL;
}

#endif
