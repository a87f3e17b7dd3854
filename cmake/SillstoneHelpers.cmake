# Warning flags for our own targets. -Werror only in development builds
# (SILLSTONE_WERROR, on by default) so that packagers can turn it off.
function(sillstone_set_warnings target)
  target_compile_options(${target} PRIVATE -Wall -Wextra -Wpedantic
    $<$<BOOL:${SILLSTONE_WERROR}>:-Werror>)
endfunction()
