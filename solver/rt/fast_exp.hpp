// A branch-free exp(x) for x <= 0 that the compiler can vectorise.
#pragma once

#include <bit>
#include <cstdint>

namespace solstrata::rt::detail {

/// exp(x) for x <= 0 (any x > 0 is treated as 0), relative error below 2 ulp; exactly 0 for
/// x < -708 (where exp underflows towards the subnormal range). glibc's exp is a library call
/// that the compiler cannot vectorise without -ffast-math; this one is plain arithmetic.
///
/// Method (Cody & Waite 1980, "Software Manual for the Elementary Functions"): x = n ln2 + r with
/// |r| <= ln2/2, ln2 split in a high part exact in 32 bits and a low part; exp(r) by its Taylor
/// series to degree 13 (truncation below 2e-17 relative at |r| = 0.347); 2^n built in the exponent
/// bits. The integer n is extracted with the 1.5 * 2^52 "shifter": adding it rounds x/ln2 to an
/// integer and leaves that integer in the low mantissa bits.
inline double exp_nonpositive(double x) {
  constexpr double kLog2e = 1.4426950408889634;
  constexpr double kLn2Hi = 0.693145751953125;          // 0x1.62e4p-1, exact in few bits
  constexpr double kLn2Lo = 1.4286068203094172321e-06;  // ln2 - kLn2Hi
  constexpr double kShifter = 6755399441055744.0;       // 1.5 * 2^52
  const double xc = x < -708.0 ? -708.0 : (x > 0.0 ? 0.0 : x);
  const double t = xc * kLog2e + kShifter;
  const double n = t - kShifter;
  const double r = (xc - n * kLn2Hi) - n * kLn2Lo;
  // Horner form of sum_{i=0}^{13} r^i / i!.
  double p = 1.0 / 6227020800.0;
  p = p * r + 1.0 / 479001600.0;
  p = p * r + 1.0 / 39916800.0;
  p = p * r + 1.0 / 3628800.0;
  p = p * r + 1.0 / 362880.0;
  p = p * r + 1.0 / 40320.0;
  p = p * r + 1.0 / 5040.0;
  p = p * r + 1.0 / 720.0;
  p = p * r + 1.0 / 120.0;
  p = p * r + 1.0 / 24.0;
  p = p * r + 1.0 / 6.0;
  p = p * r + 0.5;
  p = p * r + 1.0;
  p = p * r + 1.0;
  // The low 12 bits of t hold n (two's complement, offset by 2^51 which the shift discards).
  const std::uint64_t bits = (std::bit_cast<std::uint64_t>(t) << 52) + (std::uint64_t{1023} << 52);
  const double scale = std::bit_cast<double>(bits);
  return x < -708.0 ? 0.0 : p * scale;
}

}  // namespace solstrata::rt::detail
