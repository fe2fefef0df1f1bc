# fitproof — build, test, demo and install.
#
#   make            build build/fitproof
#   make test       unit and end-to-end tests, then the same under ASan + UBSan
#   make demo       install missing Debian packages, build, render the examples
#                   into build/demo/
#   make examples   rebuild the rendered reports committed beside the examples
#   make install    PREFIX=/usr/local DESTDIR= (binary and templates)
#   make lint       clang-tidy;  make format  clang-format in place
#   make fuzz       libFuzzer targets (clang), each run FUZZ_TIME seconds (60)

VERSION := 0.1.0
PREFIX ?= /usr/local
DESTDIR ?=

CC ?= cc
PKGS := gsl yaml-0.1 jansson libcmark libcrypto sqlite3 libpq libzip libxml-2.0
PKG_CFLAGS := $(shell pkg-config --cflags $(PKGS) 2>/dev/null || echo -I/usr/include/postgresql -I/usr/include/libxml2)
PKG_LIBS := $(shell pkg-config --libs $(PKGS) 2>/dev/null || echo -lgsl -lgslcblas -lm -lyaml -ljansson -lcmark -lcrypto -lsqlite3 -lpq -lzip -lxml2)
WARN := -std=c17 -Wall -Wextra -Wpedantic -Werror
CFLAGS ?= -O2 -g
ALL_CFLAGS := $(WARN) $(CFLAGS) $(PKG_CFLAGS) -DFITPROOF_VERSION='"$(VERSION)"' -MMD -MP
LIBS := $(PKG_LIBS) -lgmp -lm -pthread
SAN_FLAGS := -O1 -g -fsanitize=address,undefined -fno-omit-frame-pointer \
             -fno-sanitize-recover=all

TEMPLATES := $(sort $(wildcard templates/report.*))
GEN_SRC := build/gen/templates.c
SRC := $(sort $(wildcard src/*/*.c)) $(GEN_SRC)
LIB_SRC := $(filter-out src/cli/%,$(SRC))
UNIT_SRC := $(sort $(wildcard tests/unit/test_*.c))

# $(call objects,BUILD_DIR,SOURCES)
objects = $(patsubst %.c,$(1)/obj/%.o,$(2))

.SECONDARY:

.PHONY: all test test-plain test-asan demo examples install clean lint format deps fuzz

all: build/fitproof

define variant
# $(1): build folder, $(2): extra compiler and linker flags
$(1)/obj/%.o: %.c
	@mkdir -p $$(dir $$@)
	$$(CC) $$(ALL_CFLAGS) $(2) -c $$< -o $$@

$(1)/fitproof: $(call objects,$(1),$(SRC))
	$$(CC) $(2) $$^ $$(LIBS) -o $$@

$(1)/tests/%: $(1)/obj/tests/unit/%.o $(call objects,$(1),$(LIB_SRC))
	@mkdir -p $$(dir $$@)
	$$(CC) $(2) $$^ $$(LIBS) -lcmocka -o $$@

$(1)/unit-tests: $(patsubst tests/unit/%.c,$(1)/tests/%,$(UNIT_SRC))
	@touch $$@
endef

$(GEN_SRC): $(TEMPLATES) scripts/embed.sh
	@mkdir -p $(dir $@)
	scripts/embed.sh $@ $(TEMPLATES)

$(eval $(call variant,build,))
$(eval $(call variant,build/asan,$(SAN_FLAGS)))

test: test-plain test-asan

test-plain: build/fitproof build/unit-tests
	@scripts/run-tests.sh build

test-asan: build/asan/fitproof build/asan/unit-tests
	@ASAN_OPTIONS=detect_leaks=1:abort_on_error=0 \
	 UBSAN_OPTIONS=print_stacktrace=1:halt_on_error=1 \
	 scripts/run-tests.sh build/asan

# ---- fuzzing (clang's libFuzzer; not part of make test) -------------------
FUZZ_CC ?= clang
FUZZ_TIME ?= 60
FUZZ_FLAGS := -g -O1 -fsanitize=address,undefined -fno-sanitize-recover=undefined
FUZZ_TARGETS := $(patsubst tests/fuzz/%.c,build/fuzz/%,$(sort $(wildcard tests/fuzz/fuzz_*.c)))

build/fuzz/obj/%.o: %.c
	@mkdir -p $(dir $@)
	$(FUZZ_CC) $(WARN) $(PKG_CFLAGS) $(FUZZ_FLAGS) -fsanitize=fuzzer-no-link -MMD -MP -c $< -o $@

build/fuzz/fuzz_%: build/fuzz/obj/tests/fuzz/fuzz_%.o $(call objects,build/fuzz,$(LIB_SRC))
	$(FUZZ_CC) $(FUZZ_FLAGS) -fsanitize=fuzzer $^ $(LIBS) -o $@

# The whole-build target also runs the pipeline the commands share.
build/fuzz/fuzz_build: build/fuzz/obj/src/cli/pipeline.o

# Each target starts from its seeds (tests/fuzz/seeds/NAME, when present)
# and keeps what it finds in build/fuzz/corpus/NAME; inputs up to 64 KB, so
# that the spec's nesting and entry limits are within reach.
fuzz: $(FUZZ_TARGETS)
	@for target in $(FUZZ_TARGETS); do \
	    name=$${target#build/fuzz/fuzz_}; \
	    mkdir -p build/fuzz/corpus/$$name; \
	    seeds=; [ -d tests/fuzz/seeds/$$name ] && seeds=tests/fuzz/seeds/$$name; \
	    echo "fuzz: $$name for $(FUZZ_TIME) s"; \
	    $$target -max_total_time=$(FUZZ_TIME) -max_len=65536 -print_final_stats=1 \
	        build/fuzz/corpus/$$name $$seeds 2>build/fuzz/$$name.log || \
	        { tail -40 build/fuzz/$$name.log; exit 1; }; \
	    grep -E '^(stat::number_of_executed_units|stat::peak_rss_mb)' build/fuzz/$$name.log; \
	done

deps:
	@scripts/install-deps.sh

# The tablet line's spec declares checks that fail (exit 1) on purpose.
# $(call render_examples,OUT): each example's report, in OUT/NAME-report or,
# with OUT empty, beside its spec.
render_examples = for name in cylinders parcels tablets; do \
	    build/fitproof build examples/$$name/$$name.yaml \
	        $(if $(1),-o $(1)/$$name-report) || test $$? -eq 1 || exit 1; \
	done

demo: deps
	$(MAKE) build/fitproof
	@mkdir -p build/demo
	@$(call render_examples,build/demo)
	@echo "Open build/demo/cylinders-report/report.html (and the parcels and tablets reports)"

examples: build/fitproof
	@$(call render_examples,)

install: build/fitproof
	install -d $(DESTDIR)$(PREFIX)/bin $(DESTDIR)$(PREFIX)/share/fitproof/templates
	install -m 755 build/fitproof $(DESTDIR)$(PREFIX)/bin/fitproof
	cp -R templates/. $(DESTDIR)$(PREFIX)/share/fitproof/templates/

lint:
	clang-tidy $(filter src/%,$(SRC)) -- $(WARN) $(PKG_CFLAGS)

format:
	clang-format -i $(filter src/%,$(SRC)) $(wildcard src/*/*.h) $(UNIT_SRC) tests/unit/*.h

clean:
	rm -rf build

-include $(shell find build -name '*.d' 2>/dev/null)
