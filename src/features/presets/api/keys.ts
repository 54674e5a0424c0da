export const presetKeys = {
  all: ["presets"] as const,
  list: () => ["presets", "list"] as const,
  details: () => ["presets", "detail"] as const,
  detail: (id: string) => ["presets", "detail", id] as const,
};
