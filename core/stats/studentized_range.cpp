// The studentized range distribution: the law of Q = (max − min of k independent N(μ, σ²) means) / s,
// s² an independent estimate of σ² on ν degrees of freedom. Tukey's HSD takes its critical values here.
//
// Algorithm: Copenhaver, M. D. and Holland, B. S. (1988) "Computation of the distribution of the maximum
// studentized range statistic with application to multiple significance testing of simple effects",
// Journal of Statistical Computation and Simulation 30, 1–15, in the form R's ptukey/qtukey use (R's
// src/nmath/ptukey.c and qtukey.c, written from the paper; constants below are the paper's):
//   wprob(w, k): P(range of k standard normals < w) by Gauss–Legendre quadrature (12 points) over the
//                density of the largest value, the integral split into 2 or 3 intervals;
//   cdf(q, k, ν) = ∫₀^∞ wprob(q·s, k) f(s) ds, f the density of s = √(χ²_ν/ν), by 16-point Gauss–Legendre
//                quadrature on successive intervals of length 1, ½, ¼ or ⅛ (by ν) until an interval adds
//                less than 1e−14; for ν > 25 000 s is taken as 1 (wprob alone).
//   quantile:    the secant method from Odeh & Evans' normal-quantile based starting value (Applied
//                Statistics algorithm AS 70, 1974, as in the paper), continued here until two iterates
//                agree to 1e−12 relative rather than R's 1e−4 absolute, so results agree with R's qtukey
//                to about its own accuracy (R's documentation: "accurate to the 4th decimal place").
// Only one group of ranges (R's nranges = 1) is needed for Tukey's test.
//
// Accuracy (tests/unit/test_studentized_range.cpp): against R 4.2.2 ptukey, within 1e−10 absolute;
// against R's qtukey, within 1e−4 (R's stated accuracy).
#include <cmath>
#include <stdexcept>
#include <string>

#include "core/stats/anova.hpp"

namespace pw {

namespace {

// Standard normal distribution function through erfc (no cancellation in the lower tail).
double pnorm(double x) { return 0.5 * std::erfc(-x / std::sqrt(2.0)); }

// P(range of cc standard normal variates < w), Copenhaver & Holland (1988), the inner integral.
double wprob(double w, double cc) {
    constexpr int nleg = 12, ihalf = 6;
    constexpr double C1 = -30.0, C3 = 60.0, bb = 8.0, wlar = 3.0, wincr1 = 2.0, wincr2 = 3.0;
    static const double xleg[ihalf] = {0.981560634246719250690549090149, 0.904117256370474856678465866119,
                                       0.769902674194304687036893833213, 0.587317954286617447296702418941,
                                       0.367831498998180193752691536644, 0.125233408511468915472441369464};
    static const double aleg[ihalf] = {0.047175336386511827194615961485, 0.106939325995318430960254718194,
                                       0.160078328543346226334652529543, 0.203167426723065921749064455810,
                                       0.233492536538354808760849898925, 0.249147045813402785000562436043};
    const double qsqz = w * 0.5;
    if (qsqz >= bb) return 1.0;  // the range exceeds 16 standard deviations with negligible probability

    // P(|Z| < w/2)^cc: all variates within ±w/2 of zero.
    double pr_w = 2 * pnorm(qsqz) - 1.0;
    pr_w = pr_w >= 1.0 ? 1.0 : std::pow(pr_w, cc);

    const double wincr = w > wlar ? wincr1 : wincr2;
    double blb = qsqz;
    const double binc = (bb - qsqz) / wincr;
    double bub = blb + binc;
    double einsum = 0.0;
    const double cc1 = cc - 1.0;
    for (double wi = 1; wi <= wincr; wi++) {
        double elsum = 0.0;
        const double a = 0.5 * (bub + blb);
        const double b = 0.5 * (bub - blb);
        for (int jj = 1; jj <= nleg; jj++) {
            int j;
            double xx;
            if (ihalf < jj) {
                j = (nleg - jj) + 1;
                xx = xleg[j - 1];
            } else {
                j = jj;
                xx = -xleg[j - 1];
            }
            const double c = b * xx;
            const double ac = a + c;
            const double qexpo = ac * ac;
            if (qexpo > C3) break;
            const double pplus = 2 * pnorm(ac);
            const double pminus = 2 * pnorm(ac - w);
            double rinsum = (pplus * 0.5) - (pminus * 0.5);
            if (rinsum >= std::exp(C1 / cc1)) {
                rinsum = (aleg[j - 1] * std::exp(-(0.5 * qexpo))) * std::pow(rinsum, cc1);
                elsum += rinsum;
            }
        }
        elsum *= ((2.0 * b) * cc) / std::sqrt(2.0 * M_PI);
        einsum += elsum;
        blb = bub;
        bub += binc;
    }
    pr_w += einsum;
    if (pr_w <= std::exp(C1)) return 0.0;  // R: exp(C1 / nranges), one range
    return pr_w >= 1.0 ? 1.0 : pr_w;
}

void check_args(double k, double df, const char* what) {
    if (!(k >= 2) || std::isinf(k)) {
        throw std::domain_error(std::string(what) + ": the number of means must be at least 2, got " +
                                std::to_string(k));
    }
    if (!(df >= 2) || std::isnan(df)) {
        throw std::domain_error(std::string(what) + ": degrees of freedom must be at least 2, got " +
                                std::to_string(df));
    }
}

// Odeh & Evans' starting value for the quantile (AS 70), as in Copenhaver & Holland (1988).
double qinv(double p, double c, double v) {
    constexpr double p0 = 0.322232421088, q0 = 0.993484626060e-01, p1 = -1.0, q1 = 0.588581570495,
                     p2 = -0.342242088547, q2 = 0.531103462366, p3 = -0.204231210125, q3 = 0.103537752850,
                     p4 = -0.453642210148e-04, q4 = 0.38560700634e-02, c1 = 0.8832, c2 = 0.2368, c3 = 1.214,
                     c4 = 1.208, c5 = 1.4142, vmax = 120.0;
    const double ps = 0.5 - 0.5 * p;
    const double yi = std::sqrt(std::log(1.0 / (ps * ps)));
    double t = yi + ((((yi * p4 + p3) * yi + p2) * yi + p1) * yi + p0) /
                        ((((yi * q4 + q3) * yi + q2) * yi + q1) * yi + q0);
    if (v < vmax) t += (t * t * t + t) / v / 4.0;
    double q = c1 - c2 * t;
    if (v < vmax) q += -c3 / v + c4 * t / v;
    return t * (q * std::log(c - 1.0) + c5);
}

}  // namespace

double studentized_range_cdf(double q, double k, double df) {
    check_args(k, df, "studentized_range_cdf");
    if (std::isnan(q)) throw std::domain_error("studentized_range_cdf: q is not a number");
    if (q <= 0) return 0.0;
    if (std::isinf(q)) return 1.0;

    constexpr int nlegq = 16, ihalfq = 8;
    constexpr double eps1 = -30.0, eps2 = 1.0e-14, dhaf = 100.0, dquar = 800.0, deigh = 5000.0,
                     dlarg = 25000.0, ulen1 = 1.0, ulen2 = 0.5, ulen3 = 0.25, ulen4 = 0.125;
    static const double xlegq[ihalfq] = {
        0.989400934991649932596154173450, 0.944575023073232576077988415535, 0.865631202387831743880467897712,
        0.755404408355003033895101194847, 0.617876244402643748446671764049, 0.458016777657227386342419442984,
        0.281603550779258913230460501460, 0.950125098376374401853193354250e-1};
    static const double alegq[ihalfq] = {
        0.271524594117540948517805724560e-1, 0.622535239386478928628438369944e-1,
        0.951585116824927848099251076022e-1, 0.124628971255533872052476282192,
        0.149595988816576732081501730547, 0.169156519395002538189312079030,
        0.182603415044923588866763667969, 0.189450610455068496285396723208};

    if (df > dlarg) return wprob(q, k);  // s is σ for practical purposes

    // log of the density of s = √(χ²_ν/ν) up to the quadrature's change of variable, plus log(interval).
    const double f2 = df * 0.5;
    double f2lf = ((f2 * std::log(df)) - (df * M_LN2)) - std::lgamma(f2);
    const double f21 = f2 - 1.0;
    const double ff4 = df * 0.25;
    const double ulen = df <= dhaf ? ulen1 : df <= dquar ? ulen2 : df <= deigh ? ulen3 : ulen4;
    f2lf += std::log(ulen);

    double ans = 0.0;
    double otsum = 0.0;
    for (int i = 1; i <= 50; i++) {
        otsum = 0.0;
        const double twa1 = (2 * i - 1) * ulen;
        for (int jj = 1; jj <= nlegq; jj++) {
            int j;
            double t1;
            if (ihalfq < jj) {
                j = jj - ihalfq - 1;
                t1 = (f2lf + (f21 * std::log(twa1 + (xlegq[j] * ulen)))) - (((xlegq[j] * ulen) + twa1) * ff4);
            } else {
                j = jj - 1;
                t1 = (f2lf + (f21 * std::log(twa1 - (xlegq[j] * ulen)))) + (((xlegq[j] * ulen) - twa1) * ff4);
            }
            if (t1 >= eps1) {
                const double qsqz = ihalfq < jj ? q * std::sqrt(((xlegq[j] * ulen) + twa1) * 0.5)
                                                : q * std::sqrt(((-(xlegq[j] * ulen)) + twa1) * 0.5);
                const double wprb = wprob(qsqz, k);
                otsum += (wprb * alegq[j]) * std::exp(t1);
            }
        }
        if (i * ulen >= 1.0 && otsum <= eps2) break;
        ans += otsum;
    }
    return ans > 1.0 ? 1.0 : ans;
}

double studentized_range_quantile(double p, double k, double df) {
    check_args(k, df, "studentized_range_quantile");
    if (!(p > 0 && p < 1)) {
        throw std::domain_error("studentized_range_quantile: probability must lie strictly between 0 and 1, got " +
                                std::to_string(p));
    }
    // Secant iteration on cdf(x) − p (Copenhaver & Holland 1988), started as R's qtukey starts it.
    double x0 = qinv(p, k, df);
    double valx0 = studentized_range_cdf(x0, k, df) - p;
    double x1 = valx0 > 0.0 ? std::fmax(0.0, x0 - 1.0) : x0 + 1.0;
    double valx1 = studentized_range_cdf(x1, k, df) - p;
    for (int iter = 1; iter < 100; iter++) {
        if (valx1 == valx0) break;
        double ans = x1 - ((valx1 * (x1 - x0)) / (valx1 - valx0));
        valx0 = valx1;
        x0 = x1;
        if (ans < 0.0) {
            ans = 0.0;
            valx1 = -p;
        }
        valx1 = studentized_range_cdf(ans, k, df) - p;
        x1 = ans;
        if (std::fabs(x1 - x0) <= 1e-12 * std::fabs(x1)) return x1;
    }
    return x1;
}

}  // namespace pw
