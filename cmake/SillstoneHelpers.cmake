# Warning flags for our own targets. -Werror only in development builds
# (SILLSTONE_WERROR, on by default) so that packagers can turn it off.
# Clang reports an `omp simd` loop it could not vectorise (-Wpass-failed);
# that is a matter of speed, not of correctness, and instrumented builds
# (the fuzz targets) often cannot vectorise, so it is no error.
function(sillstone_set_warnings target)
  target_compile_options(${target} PRIVATE -Wall -Wextra -Wpedantic
    $<$<BOOL:${SILLSTONE_WERROR}>:-Werror>
    $<$<CXX_COMPILER_ID:Clang>:-Wno-pass-failed>)
endfunction()

# Sanitizers (SILLSTONE_SANITIZE, scripts/test-sanitized.sh): AddressSanitizer
# (with LeakSanitizer) and UndefinedBehaviorSanitizer on every target, any
# finding fatal. The library passes the link flags on (PUBLIC), so every
# program linked with it, the installed-package consumer included, gets the
# sanitizer runtime.
# GCC's -Wmaybe-uninitialized gives false positives on instrumented code
# (here inside <regex>, through Catch2), so it is off in sanitized builds only.
# GCC leaves float-cast-overflow (a double too large for its integer type)
# out of -fsanitize=undefined; clang includes it. Both get it here.
set(SILLSTONE_SANITIZE_FLAGS -fsanitize=address,undefined,float-cast-overflow
    -fno-omit-frame-pointer -fno-sanitize-recover=undefined,float-cast-overflow
    $<$<CXX_COMPILER_ID:GNU>:-Wno-maybe-uninitialized>)
# Fuzzing (SILLSTONE_FUZZ, scripts/fuzz.sh; clang only): our code is
# instrumented for libFuzzer's coverage, with ASan and UBSan; the fuzz
# targets link libFuzzer's main.
set(SILLSTONE_FUZZ_FLAGS -fsanitize=fuzzer-no-link,address,undefined -fno-omit-frame-pointer
    -fno-sanitize-recover=undefined)

# Instrumentation of one of our targets, as the options above ask.
# `link_scope` is PUBLIC for the library (programs that link it need the
# runtime), PRIVATE otherwise.
function(sillstone_set_instrumentation target link_scope)
  if(SILLSTONE_SANITIZE)
    target_compile_options(${target} PRIVATE ${SILLSTONE_SANITIZE_FLAGS})
    target_link_options(${target} ${link_scope} -fsanitize=address,undefined)
  endif()
  if(SILLSTONE_FUZZ)
    target_compile_options(${target} PRIVATE ${SILLSTONE_FUZZ_FLAGS})
    target_link_options(${target} ${link_scope} -fsanitize=address,undefined)
  endif()
endfunction()
