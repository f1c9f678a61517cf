# Installs the built tree into a fresh prefix, then configures, builds and runs the consumer
# project in examples/consumer against it. Run by CTest:
#   cmake -DBUILD_DIR=... -DSOURCE_DIR=... -DWORK_DIR=... -DSAMPLE=... -P consumer_test.cmake
foreach(var BUILD_DIR SOURCE_DIR WORK_DIR SAMPLE)
  if(NOT DEFINED ${var})
    message(FATAL_ERROR "consumer_test.cmake needs -D${var}=...")
  endif()
endforeach()
file(REMOVE_RECURSE "${WORK_DIR}")
set(prefix "${WORK_DIR}/prefix")

function(run)
  execute_process(COMMAND ${ARGN} RESULT_VARIABLE code OUTPUT_VARIABLE out ERROR_VARIABLE err)
  if(NOT code EQUAL 0)
    message(FATAL_ERROR "failed (${code}): ${ARGN}\n${out}\n${err}")
  endif()
  set(last_output "${out}" PARENT_SCOPE)
endfunction()

run(${CMAKE_COMMAND} --install "${BUILD_DIR}" --prefix "${prefix}")

# The exported package names no path of the source or build tree.
file(GLOB package_files "${prefix}/lib/cmake/stipple/*.cmake" "${prefix}/lib*/cmake/stipple/*.cmake")
if(NOT package_files)
  message(FATAL_ERROR "no CMake package files installed under ${prefix}/lib/cmake/stipple")
endif()
foreach(f ${package_files})
  file(READ "${f}" text)
  foreach(tree "${SOURCE_DIR}" "${BUILD_DIR}")
    string(FIND "${text}" "${tree}" at)
    if(NOT at EQUAL -1)
      message(FATAL_ERROR "${f} names the path ${tree}")
    endif()
  endforeach()
endforeach()
if(NOT EXISTS "${prefix}/include/stipple/version.hpp" OR NOT EXISTS "${prefix}/include/stipple/randomness/clark_evans.hpp")
  message(FATAL_ERROR "headers are not installed under ${prefix}/include/stipple")
endif()

run(${CMAKE_COMMAND} -S "${SOURCE_DIR}/examples/consumer" -B "${WORK_DIR}/build" "-DCMAKE_PREFIX_PATH=${prefix}"
    -DCMAKE_BUILD_TYPE=Release)
run(${CMAKE_COMMAND} --build "${WORK_DIR}/build" -j 2)

# The statistics alone link no GDAL, PROJ, cairo, NLopt or OpenSSL.
file(GLOB_RECURSE link_files "${WORK_DIR}/build/CMakeFiles/quadrat_density.dir/link.txt")
file(READ "${link_files}" link_line)
string(TOLOWER "${link_line}" link_line)
foreach(library gdal proj cairo nlopt ssl crypto)
  if(link_line MATCHES "${library}")
    message(FATAL_ERROR "stipple::stats brings ${library} into the link: ${link_line}")
  endif()
endforeach()

run("${WORK_DIR}/build/quadrat_density")
if(NOT last_output MATCHES "stipple [0-9]+\\.[0-9]+\\.[0-9]+" OR NOT last_output MATCHES "sedge: 17 in 0.3200 ha")
  message(FATAL_ERROR "quadrat_density printed:\n${last_output}")
endif()
run("${WORK_DIR}/build/read_and_estimate" "${SAMPLE}")
if(NOT last_output MATCHES "all [0-9.]+ per ha")
  message(FATAL_ERROR "read_and_estimate printed:\n${last_output}")
endif()
message(STATUS "consumer built and ran against ${prefix}")
