/* The sparse kernel's loops over edges in C (harness/models/sparse_native.py builds and calls
 * them): products over the edges for every head at once, and GATv2 attention (Brody et al.,
 * 2022) in one pass over each target's in-edges (harness/models/sparse_fused.py: equations).
 *
 * Layout: node rows [N, H, C] (row = H x C floats), edge rows [E, H] or [E, H, C], edges in
 * target order: target i's in-edges are k = offsets[i] .. offsets[i + 1] - 1, from sources[k].
 * A call handles the targets first .. last - 1; calls on disjoint ranges may run at once. */
#include <math.h>
#include <stdint.h>

#define AHEAD 8 /* edges ahead whose source rows are fetched early: the reads are random */

/* ask for the row (`row` floats) of the node AHEAD entries after entry k, from `rows` */
static inline void fetch(const float *rows, const int64_t *columns, int64_t k, int64_t end,
                         int64_t row) {
    if (k + AHEAD < end)
        for (int64_t c = 0; c < row; c += 16)
            __builtin_prefetch(rows + columns[k + AHEAD] * row + c);
}

/* out[r, h, :] = sum_k weights[k, h] dense[columns[k], h, :] over k = pointer[r] ..
 * pointer[r + 1] - 1, for the rows first .. last - 1: per head the CSR product
 * A_h dense[:, h], every head in one pass. weights[k, h] is at k * edge_step +
 * h * head_step; dense and out are [N, H, width] contiguous. */
void heads_product(const int64_t *restrict pointer, const int64_t *restrict columns,
                   const float *restrict weights,
                   int64_t edge_step, int64_t head_step, const float *restrict dense,
                   int64_t heads, int64_t width, int64_t first, int64_t last,
                   float *restrict out) {
    const int64_t row = heads * width, end = pointer[last];
    for (int64_t r = first; r < last; ++r) {
        float *restrict total = out + r * row;
        for (int64_t c = 0; c < row; ++c) total[c] = 0.0f;
        for (int64_t k = pointer[r]; k < pointer[r + 1]; ++k) {
            fetch(dense, columns, k, end, row);
            const float *restrict values = dense + columns[k] * row;
            const float *restrict weight = weights + k * edge_step;
            for (int64_t h = 0; h < heads; ++h) {
                const float w = weight[h * head_step];
                for (int64_t c = h * width; c < (h + 1) * width; ++c) total[c] += w * values[c];
            }
        }
    }
}

/* out[columns[k], h, :] += weights[k, h] dense[r, h, :] for the entries k of the rows r =
 * first .. last - 1: the transposed product A_h^T dense[:, h] without sorting the entries by
 * column; out [N, H, width] is this range's own (columns are shared between ranges). */
void heads_scatter(const int64_t *restrict pointer, const int64_t *restrict columns,
                   const float *restrict weights, int64_t edge_step, int64_t head_step,
                   const float *restrict dense, int64_t heads, int64_t width, int64_t first,
                   int64_t last, float *restrict out) {
    const int64_t row = heads * width, end = pointer[last];
    for (int64_t r = first; r < last; ++r) {
        const float *restrict values = dense + r * row;
        for (int64_t k = pointer[r]; k < pointer[r + 1]; ++k) {
            fetch(out, columns, k, end, row);
            float *restrict total = out + columns[k] * row;
            const float *restrict weight = weights + k * edge_step;
            for (int64_t h = 0; h < heads; ++h) {
                const float w = weight[h * head_step];
                for (int64_t c = h * width; c < (h + 1) * width; ++c) total[c] += w * values[c];
            }
        }
    }
}

/* out[k, h] = <left[i, h, :], right[columns[k], h, :]> for the edges k of the rows i =
 * first .. last - 1 (the sampled product on the CSR pattern); left, right [N, H, width]. */
void heads_sampled(const int64_t *restrict pointer, const int64_t *restrict columns,
                   const float *restrict left, const float *restrict right, int64_t heads,
                   int64_t width, int64_t first, int64_t last, float *restrict out) {
    const int64_t row = heads * width, end = pointer[last];
    for (int64_t i = first; i < last; ++i) {
        const float *restrict at_left = left + i * row;
        for (int64_t k = pointer[i]; k < pointer[i + 1]; ++k) {
            fetch(right, columns, k, end, row);
            const float *restrict at_right = right + columns[k] * row;
            for (int64_t h = 0; h < heads; ++h) {
                float total = 0.0f;
                for (int64_t c = h * width; c < (h + 1) * width; ++c)
                    total += at_left[c] * at_right[c];
                out[k * heads + h] = total;
            }
        }
    }
}

/* GAT's scores in one pass over each target's in-edges (harness/models/sparse_static.py):
 * for head h and edge k = j -> i, s = u[h, j] + t[h, i]; positive[h, k] = s > 0;
 * powers[h, k] = exp(LeakyReLU(s) - bound[h]); sums[h, i] = sum of i's powers. u, t [H, N],
 * powers and positive [H, E] (edges in target order), sums [H, N], all contiguous. */
void static_exponentials(const int64_t *restrict offsets, const int64_t *restrict sources,
                         const float *restrict from_source, const float *restrict at_target,
                         const float *restrict bound, int64_t heads, int64_t nodes,
                         int64_t edges, float slope, int64_t first, int64_t last,
                         float *restrict powers, uint8_t *restrict positive,
                         float *restrict sums) {
    for (int64_t h = 0; h < heads; ++h) {
        const float *restrict u = from_source + h * nodes, top = bound[h];
        float *restrict power = powers + h * edges;
        uint8_t *restrict above = positive + h * edges;
        for (int64_t i = first; i < last; ++i) {
            const float t = at_target[h * nodes + i];
            float total = 0.0f;
            for (int64_t k = offsets[i]; k < offsets[i + 1]; ++k) {
                const float score = u[sources[k]] + t;
                above[k] = score > 0.0f;
                power[k] = expf((score > 0.0f ? score : score * slope) - top);
                total += power[k];
            }
            sums[h * nodes + i] = total;
        }
    }
}

typedef struct {
    const float *restrict source;    /* x_s [N, H, C]: score part and message of each source */
    const float *restrict target;    /* x_t [N, H, C] */
    const float *restrict att;       /* a [H, C] */
    const float *restrict edge_part; /* e [E, H, C] or 0 */
    const float *restrict keep;      /* dropout mask [E, H] (0 or 1 / (1 - p)) or 0 */
    const int64_t *restrict offsets;
    const int64_t *restrict sources;
    int64_t heads, width;
    float slope;
} Inputs;

/* x_s[j] + x_t[i] (+ e_ij) for edge k into i */
static inline void form(const Inputs *in, int64_t i, int64_t k, int64_t row,
                        float *restrict hidden) {
    const float *restrict at_source = in->source + in->sources[k] * row;
    const float *restrict at_target = in->target + i * row;
    for (int64_t c = 0; c < row; ++c) hidden[c] = at_source[c] + at_target[c];
    if (in->edge_part)
        for (int64_t c = 0; c < row; ++c) hidden[c] += in->edge_part[k * row + c];
}

static inline float weight_of(const Inputs *in, const float *alpha, int64_t k, int64_t h) {
    const float a = alpha[k * in->heads + h];
    return in->keep ? a * in->keep[k * in->heads + h] : a;
}

/* alpha [E, H]: softmax of the scores over each target's in-edges (shifted by their maximum);
 * out [N, H, C]: sum_j alpha_ij keep_ij x_s[j]. */
void dynamic_attention_forward(const Inputs *in, int64_t first, int64_t last, float *alpha,
                               float *out) {
    const int64_t heads = in->heads, width = in->width, row = heads * width;
    const int64_t end = in->offsets[last];
    const float *restrict att = in->att, slope = in->slope; /* locals: vectorised loops */
    float hidden[row], top[heads], total[heads];
    for (int64_t i = first; i < last; ++i) {
        const int64_t begin = in->offsets[i], stop = in->offsets[i + 1];
        for (int64_t h = 0; h < heads; ++h) top[h] = -INFINITY, total[h] = 0.0f;
        for (int64_t k = begin; k < stop; ++k) {
            fetch(in->source, in->sources, k, end, row);
            form(in, i, k, row, hidden);
            for (int64_t c = 0; c < row; ++c)
                hidden[c] = att[c] * (hidden[c] > 0.0f ? hidden[c] : hidden[c] * slope);
            for (int64_t h = 0; h < heads; ++h) {
                float score = 0.0f;
                for (int64_t c = h * width; c < (h + 1) * width; ++c) score += hidden[c];
                alpha[k * heads + h] = score;
                top[h] = score > top[h] ? score : top[h];
            }
        }
        for (int64_t k = begin; k < stop; ++k)
            for (int64_t h = 0; h < heads; ++h) {
                const float power = expf(alpha[k * heads + h] - top[h]);
                alpha[k * heads + h] = power;
                total[h] += power;
            }
        float *restrict at_target = out + i * row;
        for (int64_t c = 0; c < row; ++c) at_target[c] = 0.0f;
        for (int64_t k = begin; k < stop; ++k) {
            const float *restrict message = in->source + in->sources[k] * row;
            for (int64_t h = 0; h < heads; ++h) {
                alpha[k * heads + h] /= total[h];
                const float weight = weight_of(in, alpha, k, h);
                for (int64_t c = h * width; c < (h + 1) * width; ++c)
                    at_target[c] += weight * message[c];
            }
        }
    }
}

/* From the output gradient g [N, H, C] and the forward's alpha: per edge the weight gradient
 * g_w = <g_i, x_s[j]>, the score gradient g_s = alpha (keep g_w - sum_k alpha_ik keep g_w),
 * then the hidden vector's g_h = g_s a LeakyReLU'(h); sums into grad_source (this range's own
 * buffer: sources are shared between ranges), grad_target (this range's rows), grad_att (this
 * range's own row) and grad_edge (this range's edges) or 0. */
void dynamic_attention_backward(const Inputs *in, int64_t first, int64_t last,
                                const float *alpha, const float *grad, float *grad_source,
                                float *grad_target, float *grad_att, float *grad_edge) {
    const int64_t heads = in->heads, width = in->width, row = heads * width;
    const int64_t end = in->offsets[last];
    const float *restrict att = in->att, slope = in->slope; /* locals: vectorised loops */
    float hidden[row], gradient[row], att_sum[row], target_sum[row], centre[heads], score[heads];
    for (int64_t c = 0; c < row; ++c) att_sum[c] = 0.0f;
    for (int64_t i = first; i < last; ++i) {
        const int64_t begin = in->offsets[i], stop = in->offsets[i + 1];
        const float *restrict at_grad = grad + i * row;
        for (int64_t h = 0; h < heads; ++h) centre[h] = 0.0f;
        for (int64_t k = begin; k < stop; ++k) {
            fetch(in->source, in->sources, k, end, row);
            const float *restrict message = in->source + in->sources[k] * row;
            for (int64_t h = 0; h < heads; ++h) {
                float product = 0.0f;
                for (int64_t c = h * width; c < (h + 1) * width; ++c)
                    product += at_grad[c] * message[c];
                centre[h] += weight_of(in, alpha, k, h) * product;
            }
        }
        for (int64_t c = 0; c < row; ++c) target_sum[c] = 0.0f;
        for (int64_t k = begin; k < stop; ++k) {
            const float *restrict message = in->source + in->sources[k] * row;
            float *restrict at_source = grad_source + in->sources[k] * row;
            for (int64_t h = 0; h < heads; ++h) {
                const float weight = weight_of(in, alpha, k, h);
                const float dropped = in->keep ? in->keep[k * heads + h] : 1.0f;
                float product = 0.0f;
                for (int64_t c = h * width; c < (h + 1) * width; ++c) {
                    product += at_grad[c] * message[c];
                    at_source[c] += weight * at_grad[c]; /* the message's gradient */
                }
                score[h] = alpha[k * heads + h] * (dropped * product - centre[h]);
            }
            form(in, i, k, row, hidden);
            for (int64_t h = 0; h < heads; ++h)
                for (int64_t c = h * width; c < (h + 1) * width; ++c) {
                    const int positive = hidden[c] > 0.0f;
                    gradient[c] = score[h] * att[c] * (positive ? 1.0f : slope);
                    att_sum[c] += score[h] * (positive ? hidden[c] : hidden[c] * slope);
                }
            for (int64_t c = 0; c < row; ++c) {
                target_sum[c] += gradient[c];
                at_source[c] += gradient[c];
            }
            if (grad_edge)
                for (int64_t c = 0; c < row; ++c) grad_edge[k * row + c] = gradient[c];
        }
        for (int64_t c = 0; c < row; ++c) grad_target[i * row + c] = target_sum[c];
    }
    for (int64_t c = 0; c < row; ++c) grad_att[c] = att_sum[c];
}
