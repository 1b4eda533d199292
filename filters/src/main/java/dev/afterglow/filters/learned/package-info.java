/**
 * Learned recurrent reconstruction: the event voxel grid ({@link dev.afterglow.filters.learned.VoxelGrid}),
 * the contract a model must follow ({@link dev.afterglow.filters.learned.ModelContract}) and the
 * stage that runs such a model through ONNX Runtime on the CPU
 * ({@link dev.afterglow.filters.learned.LearnedReconstruction}, chain label {@code learned-recon}).
 */
package dev.afterglow.filters.learned;
