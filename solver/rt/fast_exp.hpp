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
/// |r| <= ln2/2, ln2 split in a high part exact in 32 bits and a low part; exp(r) by a degree-11
/// minimax polynomial (approximation error 3e-18 relative); 2^n built in the exponent bits. The integer n is extracted with the 1.5 * 2^52 "shifter": adding it rounds x/ln2 to an
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
  // Degree-11 minimax polynomial for exp(r) on [-ln2/2, ln2/2] (relative error 3e-18 before
  // rounding; coefficients from a Remez exchange in 50-digit arithmetic, near the Taylor 1/i!).
  double p = 2.4994314816236953e-08;
  p = p * r + 2.763229322970563e-07;
  p = p * r + 2.7557622499311845e-06;
  p = p * r + 2.480148652158092e-05;
  p = p * r + 0.00019841269432715298;
  p = p * r + 0.0013888888951223825;
  p = p * r + 0.008333333333559253;
  p = p * r + 0.04166666666649277;
  p = p * r + 0.1666666666666617;
  p = p * r + 0.5000000000000018;
  p = p * r + 1.0;
  p = p * r + 1.0;
  // The low 12 bits of t hold n (two's complement, offset by 2^51 which the shift discards).
  const std::uint64_t bits = (std::bit_cast<std::uint64_t>(t) << 52) + (std::uint64_t{1023} << 52);
  const double scale = std::bit_cast<double>(bits);
  return x < -708.0 ? 0.0 : p * scale;
}

/// exp(x) for x <= 0 in float (any x > 0 is treated as 0), relative error about 2 ulp of float;
/// exactly 0 for x < -87 (where expf underflows towards the subnormal range). The same method
/// with the float split of ln2 and the degree-6 polynomial of the Cephes library (Moshier 1989,
/// "Methods and Programs for Mathematical Functions", expf: minimax on [-ln2/2, ln2/2]).
inline float exp_nonpositive(float x) {
  constexpr float kLog2e = 1.44269504088896341f;
  constexpr float kLn2Hi = 0.693359375f;      // exact in few bits
  constexpr float kLn2Lo = -2.12194440e-4f;   // ln2 - kLn2Hi
  constexpr float kShifter = 12582912.0f;     // 1.5 * 2^23
  const float xc = x < -87.0f ? -87.0f : (x > 0.0f ? 0.0f : x);
  const float t = xc * kLog2e + kShifter;
  const float n = t - kShifter;
  const float r = (xc - n * kLn2Hi) - n * kLn2Lo;
  float p = 1.9875691500e-4f;
  p = p * r + 1.3981999507e-3f;
  p = p * r + 8.3334519073e-3f;
  p = p * r + 4.1665795894e-2f;
  p = p * r + 1.6666665459e-1f;
  p = p * r + 5.0000001201e-1f;
  p = p * r * r + r + 1.0f;
  // The low 9 bits of t hold n (offset by 2^22, which the shift discards).
  const std::uint32_t bits = (std::bit_cast<std::uint32_t>(t) << 23) + (std::uint32_t{127} << 23);
  const float scale = std::bit_cast<float>(bits);
  return x < -87.0f ? 0.0f : p * scale;
}

}  // namespace solstrata::rt::detail
