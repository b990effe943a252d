#include "io/mapped_window.h"

#include <sys/mman.h>
#include <unistd.h>


namespace gazemill {

std::size_t MappedWindow::page_size() {
  static const std::size_t page = static_cast<std::size_t>(::sysconf(_SC_PAGESIZE));
  return page;
}

std::unique_ptr<MappedWindow> MappedWindow::map(int fd, std::uint64_t offset, std::size_t length) {
  const std::size_t page = page_size();
  const std::size_t mapped = (length + page - 1) / page * page;
  if (mapped == 0 || offset % page != 0) return nullptr;
  void* p = ::mmap(nullptr, mapped, PROT_READ | PROT_WRITE, MAP_PRIVATE, fd, static_cast<off_t>(offset));
  if (p == MAP_FAILED) return nullptr;
  ::madvise(p, mapped, MADV_SEQUENTIAL);
  std::unique_ptr<MappedWindow> w(new MappedWindow());
  w->data_ = static_cast<char*>(p);
  w->size_ = length;
  w->mapped_ = mapped;
  return w;
}

MappedWindow::~MappedWindow() {
  if (data_) ::munmap(data_, mapped_);
}

}  // namespace gazemill
