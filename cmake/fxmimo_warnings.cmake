# Warnings are set per target (no global flags). FXMIMO_WERROR turns them into errors.
function(fxmimo_set_warnings target)
  target_compile_options(${target} PRIVATE -Wall -Wextra -Wpedantic -Wshadow
    $<$<BOOL:${FXMIMO_WERROR}>:-Werror>
    # GCC 12 reports false positives from inlined library code at -O2/-O3: -Wrestrict in
    # std::string (GCC bug 105651) and -Wmaybe-uninitialized inside Boost.Multiprecision.
    $<$<CXX_COMPILER_ID:GNU>:-Wno-restrict -Wno-maybe-uninitialized>)
endfunction()

# The arithmetic room is held to -Wconversion as well: a silent narrowing there is a wrong bit.
function(fxmimo_set_strict_warnings target)
  fxmimo_set_warnings(${target})
  target_compile_options(${target} PRIVATE -Wconversion -Wsign-conversion)
endfunction()

# Declares one room library: fxmimo_<room> with alias fxmimo::<room>, public headers under
# <room>/include, installed and exported.
function(fxmimo_add_room room)
  cmake_parse_arguments(ARG "" "" "SOURCES;PUBLIC_DEPS;PRIVATE_DEPS" ${ARGN})
  add_library(fxmimo_${room} ${ARG_SOURCES})
  add_library(fxmimo::${room} ALIAS fxmimo_${room})
  set_target_properties(fxmimo_${room} PROPERTIES EXPORT_NAME ${room} POSITION_INDEPENDENT_CODE ON)
  target_include_directories(fxmimo_${room} PUBLIC
    $<BUILD_INTERFACE:${CMAKE_CURRENT_SOURCE_DIR}/include>
    $<INSTALL_INTERFACE:${CMAKE_INSTALL_INCLUDEDIR}>)
  target_compile_features(fxmimo_${room} PUBLIC cxx_std_20)
  target_link_libraries(fxmimo_${room} PUBLIC ${ARG_PUBLIC_DEPS} PRIVATE ${ARG_PRIVATE_DEPS})
  install(TARGETS fxmimo_${room} EXPORT fxmimoTargets
    ARCHIVE DESTINATION ${CMAKE_INSTALL_LIBDIR} LIBRARY DESTINATION ${CMAKE_INSTALL_LIBDIR})
  install(DIRECTORY include/ DESTINATION ${CMAKE_INSTALL_INCLUDEDIR})
endfunction()
