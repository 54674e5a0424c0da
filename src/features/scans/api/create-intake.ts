import { useMutation, useQueryClient } from "@tanstack/react-query";
import { z } from "zod";
import { API } from "../../../../shared/api";
import { intakeSchema, type Intake } from "../../../../shared/schemas/scans";
import { apiRequest } from "../../../lib/api-client";
import { intakesQueryOptions } from "./get-intakes";

const createIntakeResponse = z.object({ intake: intakeSchema });

export async function createIntake(name: string): Promise<Intake> {
  const { intake } = await apiRequest(API.intakesCreate, {
    body: { name },
    schema: createIntakeResponse,
    quiet: true,
  });
  return intake;
}

export function useCreateIntake() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: createIntake,
    onSuccess: () => queryClient.invalidateQueries({ queryKey: intakesQueryOptions().queryKey }),
  });
}
