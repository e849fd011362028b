# The Debian package of cavitas (CPack DEB): `cpack -G DEB` in the build folder
# makes cavitas_<version>_<arch>.deb holding the executable, the report module,
# the man page and the two documents. dpkg-shlibdeps (Debian dpkg-dev) reads
# the libraries cavitas and its module link against and declares the packages
# they come from; the report's fonts are not linked, so they are named here.
install(FILES ${PROJECT_SOURCE_DIR}/README.md ${PROJECT_SOURCE_DIR}/DEVELOPERS.md
        DESTINATION ${CMAKE_INSTALL_DOCDIR})

set(CPACK_PACKAGE_NAME cavitas)
set(CPACK_PACKAGE_VENDOR "cavitas")
set(CPACK_PACKAGE_CONTACT "cavitas maintainers <cavitas@example.invalid>")
set(CPACK_PACKAGE_DESCRIPTION_SUMMARY "${PROJECT_DESCRIPTION}")
set(CPACK_PACKAGE_VERSION "${PROJECT_VERSION}")
set(CPACK_PACKAGING_INSTALL_PREFIX /usr)
set(CPACK_STRIP_FILES ON)
set(CPACK_GENERATOR DEB)
set(CPACK_DEBIAN_FILE_NAME DEB-DEFAULT)
set(CPACK_DEBIAN_PACKAGE_SECTION science)
set(CPACK_DEBIAN_PACKAGE_PRIORITY optional)
set(CPACK_DEBIAN_PACKAGE_SHLIBDEPS ON)
set(CPACK_DEBIAN_PACKAGE_DEPENDS "fonts-dejavu-core")
# The summary (the project's description) becomes the first line; CPack indents these.
set(CPACK_DEBIAN_PACKAGE_DESCRIPTION
    "cavitas learns a baseline from known-good vibration recordings of one
machine and measurement point, then judges a new recording from the same
point against it: normal, incipient or developed cavitation, or indeterminate
when the data cannot support a verdict, with a confidence and the evidence in
numbers, read beside the NPSH margin when the operating point is given.
Work-order reports are written as HTML and PDF.")
include(CPack)
