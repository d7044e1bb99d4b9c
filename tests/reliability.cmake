# Included at the end of tests/CMakeLists.txt.
#
# Every command has landed, so no reliability test has a "skipped" status:
# the catalogue runner and cli_commands.sh fail when a command is missing.

# valgrind memcheck tests: ctest label "memcheck", registered only with
# -DHOLDCOUNT_MEMCHECK=ON (they take minutes, so the everyday suite leaves
# them out; scripts/test.sh builds build-memcheck with the option and runs
# `ctest -L memcheck` there).
#
# Each unit test runs under memcheck, and so does the bad-input catalogue
# (every error path of the real binary) and tests/memcheck/cli_commands.sh
# (the commands on valid data).  A definite or indirect leak, or any invalid
# read, write, free or use of uninitialised memory, makes valgrind exit 99 and
# the test fail.  "Possibly lost" blocks are not errors: OpenMP's and
# OpenBLAS's thread pools keep pointers into the middle of their blocks
# until exit, which is what memcheck calls possibly lost.
if(NOT HOLDCOUNT_MEMCHECK)
  return()
endif()
find_program(VALGRIND valgrind REQUIRED)
if(HOLDCOUNT_SANITIZE)
  message(FATAL_ERROR "valgrind cannot run sanitizer builds: leave HOLDCOUNT_SANITIZE off with HOLDCOUNT_MEMCHECK")
endif()

set(VALGRIND_COMMAND ${VALGRIND} -q --error-exitcode=99 --leak-check=full
    --errors-for-leak-kinds=definite,indirect
    --suppressions=${CMAKE_CURRENT_SOURCE_DIR}/valgrind.supp)
list(JOIN VALGRIND_COMMAND " " VALGRIND_COMMAND_TEXT)

# Left out because valgrind cannot run them faithfully (their memory is
# still checked: by the sanitizer stage, and the code they cover runs under
# valgrind through the commands in memcheck/cli_commands.sh):
#   test_sampler, test_curve: checks that need long double's 80-bit
#     arithmetic (agreement to 1e-12; a z-score that is undefined because
#     every path at n = M gives the very same variance); valgrind carries out
#     long double arithmetic in 64 bits (its manual, "Limitations").
#   test_plots: checks that posix_spawn reports a missing gnuplot; under
#     valgrind the spawn is emulated and the failed exec shows up as exit
#     127 of the child instead.
set(MEMCHECK_LEFT_OUT test_sampler test_curve test_plots)
foreach(src ${UNIT_TESTS})
  get_filename_component(name ${src} NAME_WE)
  if(name IN_LIST MEMCHECK_LEFT_OUT)
    continue()
  endif()
  add_test(NAME memcheck_${name} COMMAND ${VALGRIND_COMMAND} $<TARGET_FILE:${name}>)
  # HOLDCOUNT_TEST_NO_TCACHE: test_csvread re-executes /proc/self/exe to turn
  # glibc's malloc cache off, which under valgrind is valgrind itself; with
  # valgrind's own allocator the cache does not exist anyway.
  set_tests_properties(memcheck_${name} PROPERTIES LABELS "memcheck"
    ENVIRONMENT "${TEST_ENV};HOLDCOUNT_TEST_NO_TCACHE=1")
endforeach()

# The shell runners put HOLDCOUNT_WRAPPER in front of every holdcount call.
# OMP_NUM_THREADS=2 keeps valgrind's serialised threads few.
foreach(script cli_bad_inputs.sh memcheck/cli_commands.sh)
  if(EXISTS ${CMAKE_CURRENT_SOURCE_DIR}/${script})
    get_filename_component(name ${script} NAME_WE)
    add_test(NAME memcheck_${name} COMMAND bash ${CMAKE_CURRENT_SOURCE_DIR}/${script})
    set_tests_properties(memcheck_${name} PROPERTIES LABELS "memcheck"
      ENVIRONMENT "${TEST_ENV};HOLDCOUNT_WRAPPER=${VALGRIND_COMMAND_TEXT};HOLDCOUNT_WRAPPER_NAME=valgrind;OMP_NUM_THREADS=2")
  endif()
endforeach()
