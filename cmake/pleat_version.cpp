// The one source file of libpleat itself (cmake/PleatInstall.cmake): the
// library is the whole of core, lp and enumerate, linked in as archives.
namespace pleat {
extern const char* const library_version;
const char* const library_version = PLEAT_VERSION;
}  // namespace pleat
