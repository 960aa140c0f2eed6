# Writes OUT (a header) with TANNERY_BUILD_VERSION = VERSION plus the git commit of SOURCE
# ("0.1.0+g1a2b3c4", "+dirty" with uncommitted changes; "0.1.0+unknown" outside a git tree),
# rewriting it only when it changes so nothing recompiles needlessly. Run at every build.
execute_process(COMMAND git -C "${SOURCE}" rev-parse --short=12 HEAD
                OUTPUT_VARIABLE commit OUTPUT_STRIP_TRAILING_WHITESPACE ERROR_QUIET RESULT_VARIABLE failed)
if(failed OR commit STREQUAL "")
  set(id "${VERSION}+unknown")
else()
  execute_process(COMMAND git -C "${SOURCE}" status --porcelain --untracked-files=no
                  OUTPUT_VARIABLE changes OUTPUT_STRIP_TRAILING_WHITESPACE ERROR_QUIET)
  set(id "${VERSION}+g${commit}")
  if(NOT changes STREQUAL "")
    string(APPEND id ".dirty")
  endif()
endif()
set(text "#define TANNERY_BUILD_VERSION \"${id}\"\n")
if(EXISTS "${OUT}")
  file(READ "${OUT}" old)
endif()
if(NOT old STREQUAL text)
  file(WRITE "${OUT}" "${text}")
endif()
