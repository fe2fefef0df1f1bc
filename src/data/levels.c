/*
 * levels.c — the distinct texts of a category column: an open-addressing
 * hash table (linear probing, load at most one half) over texts stored
 * back to back, so that each cell costs one hash and, usually, one
 * comparison. The hash mixes eight bytes at a time with a multiplication
 * by 2^64/φ (Knuth's multiplicative hashing, TAOCP vol. 3, §6.4).
 */
#include <stdlib.h>
#include <string.h>

#include "internal.h"

static uint64_t hash_text(const char *text, size_t length)
{
    const uint64_t k = UINT64_C(0x9E3779B97F4A7C15);
    uint64_t h = length * k;
    while (length >= 8) {
        uint64_t word;
        memcpy(&word, text, 8);
        h = (h ^ word) * k;
        h ^= h >> 29;
        text += 8;
        length -= 8;
    }
    uint64_t tail = 0;
    for (size_t i = 0; i < length; i++)
        tail |= (uint64_t)(unsigned char)text[i] << (8 * i);
    h = (h ^ tail) * k;
    return h ^ (h >> 32);
}

void level_set_free(level_set *set)
{
    buf_free(&set->names);
    free(set->offsets);
    free(set->slots);
    free(set->slot_hashes);
    memset(set, 0, sizeof *set);
}

const char *level_set_name(const level_set *set, uint32_t entry)
{
    return set->names.data + set->offsets[entry];
}

size_t level_set_length(const level_set *set, uint32_t entry)
{
    size_t next = entry + 1 < set->count ? set->offsets[entry + 1] : set->names.length;
    return next - set->offsets[entry] - 1;
}

static void rehash(level_set *set)
{
    size_t n_slots = set->n_slots ? set->n_slots * 2 : 16;
    uint32_t *slots = xcalloc(n_slots, sizeof *slots);
    uint64_t *hashes = xmalloc(n_slots * sizeof *hashes);
    for (size_t i = 0; i < set->n_slots; i++) {
        if (!set->slots[i])
            continue;
        size_t slot = set->slot_hashes[i] & (n_slots - 1);
        while (slots[slot])
            slot = (slot + 1) & (n_slots - 1);
        slots[slot] = set->slots[i];
        hashes[slot] = set->slot_hashes[i];
    }
    free(set->slots);
    free(set->slot_hashes);
    set->slots = slots;
    set->slot_hashes = hashes;
    set->n_slots = n_slots;
}

/* The slot holding text, or the empty slot where it belongs. */
static size_t probe(const level_set *set, const char *text, size_t length, uint64_t h)
{
    size_t slot = h & (set->n_slots - 1);
    while (set->slots[slot]) {
        uint32_t entry = set->slots[slot] - 1;
        if (set->slot_hashes[slot] == h && level_set_length(set, entry) == length &&
            memcmp(level_set_name(set, entry), text, length) == 0)
            return slot;
        slot = (slot + 1) & (set->n_slots - 1);
    }
    return slot;
}

int64_t level_set_find(const level_set *set, const char *text, size_t length)
{
    if (!set->n_slots)
        return -1;
    size_t slot = probe(set, text, length, hash_text(text, length));
    return set->slots[slot] ? (int64_t)set->slots[slot] - 1 : -1;
}

uint32_t level_set_intern(level_set *set, const char *text, size_t length, bool *added)
{
    if ((set->count + 1) * 2 > set->n_slots)
        rehash(set);
    uint64_t h = hash_text(text, length);
    size_t slot = probe(set, text, length, h);
    *added = !set->slots[slot];
    if (!*added)
        return set->slots[slot] - 1;
    xgrow((void **)&set->offsets, &set->offsets_capacity, set->count + 1, sizeof(size_t));
    set->offsets[set->count] = set->names.length;
    buf_put(&set->names, text, length);
    buf_putc(&set->names, '\0');
    set->slots[slot] = (uint32_t)set->count + 1;
    set->slot_hashes[slot] = h;
    return (uint32_t)set->count++;
}
