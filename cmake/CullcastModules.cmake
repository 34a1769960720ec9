# cullcast_module(<name> DEPENDS <targets...> [INCLUDES <dirs...>])
# Defines cullcast_<name> from src/<name>/*.cpp (an INTERFACE library while the
# module has no sources yet) and appends it to CULLCAST_MODULE_TARGETS.
set(CULLCAST_MODULE_TARGETS "" CACHE INTERNAL "")
function(cullcast_module name)
  cmake_parse_arguments(ARG "" "" "DEPENDS;INCLUDES" ${ARGN})
  file(GLOB sources CONFIGURE_DEPENDS "${PROJECT_SOURCE_DIR}/src/${name}/*.cpp")
  set(target cullcast_${name})
  if(sources)
    add_library(${target} STATIC ${sources})
    set(scope PUBLIC)
    target_compile_options(${target} PRIVATE -Wall -Wextra -Wpedantic
      # The drift hot loop needs maths the compiler can vectorise: maths
      # functions that never set errno, and no floating-point traps (we never
      # enable them), so conditional arithmetic becomes branch-free selects.
      # No -ffast-math: results stay IEEE, the same bits as before.
      -fno-math-errno -fno-trapping-math)
    target_include_directories(${target} PRIVATE "${PROJECT_SOURCE_DIR}/src/${name}")
  else()
    add_library(${target} INTERFACE)
    set(scope INTERFACE)
  endif()
  target_include_directories(${target} ${scope} "${PROJECT_SOURCE_DIR}/include")
  if(ARG_INCLUDES)
    target_include_directories(${target} SYSTEM ${scope} ${ARG_INCLUDES})
  endif()
  target_compile_definitions(${target} ${scope} CULLCAST_VERSION="${PROJECT_VERSION}")
  target_link_libraries(${target} ${scope} ${ARG_DEPENDS})
  set(CULLCAST_MODULE_TARGETS ${CULLCAST_MODULE_TARGETS} ${target} CACHE INTERNAL "")
endfunction()
